/**
 * Every public page is valid HTML: the Nu HTML Checker (npm vnu-jar, run with Debian's Java)
 * reads the markup the server sends and must report no errors. `npm test` installs Java
 * (default-jre-headless) when it is missing.
 */
import { expect, test } from '@playwright/test';
import { spawnSync } from 'node:child_process';
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { resolve } from 'node:path';
import * as cheerio from 'cheerio';
import { PUBLIC_PAGES } from './support/public-pages';

const require = createRequire(import.meta.url);
const VNU_JAR: string = require('vnu-jar');
const DIR = resolve('tests/artifacts/html');

interface VnuMessage {
	type: string;
	subType?: string;
	url: string;
	lastLine?: number;
	message: string;
	extract?: string;
}

test('every public page passes the Nu HTML Checker with no errors', async ({ request }) => {
	test.setTimeout(180_000);
	rmSync(DIR, { recursive: true, force: true });
	mkdirSync(DIR, { recursive: true });
	const files = new Map<string, string>();
	for (const [i, path] of PUBLIC_PAGES.entries()) {
		const res = await request.get(path);
		expect(res.status(), `${path} answers`).toBe(200);
		const file = resolve(DIR, `page-${String(i).padStart(2, '0')}.html`);
		writeFileSync(file, await res.text());
		files.set(`file:${file}`, path);
	}
	// vnu writes its JSON report to stderr; --exit-zero-always leaves the verdict to us.
	const run = spawnSync(
		'java',
		[
			'-jar',
			VNU_JAR,
			'--format',
			'json',
			'--errors-only',
			'--exit-zero-always',
			...[...files.keys()].map((u) => u.slice(5))
		],
		{
			encoding: 'utf8',
			maxBuffer: 32 * 1024 * 1024
		}
	);
	expect(run.error, 'java runs the Nu HTML Checker').toBeUndefined();
	const out = run.stderr.trim();
	const report = JSON.parse(out) as { messages: VnuMessage[] };
	const errors = report.messages
		.filter((m) => m.type === 'error' || m.subType === 'fatal')
		.map(
			(m) =>
				`${files.get(m.url) ?? m.url}:${m.lastLine ?? '?'} ${m.message}${m.extract ? ` [${m.extract.trim().slice(0, 80)}]` : ''}`
		);
	expect(errors, 'Nu HTML Checker errors').toEqual([]);
});

test('every shared drawing a public page places (<use href="#…">) is on that page, once', async ({ request }) => {
	for (const path of PUBLIC_PAGES) {
		const res = await request.get(path);
		expect(res.ok(), `${path} answers`).toBe(true);
		const $ = cheerio.load(await res.text());
		const refs = new Set(
			$('use')
				.map((_, el) => $(el).attr('href') ?? '')
				.get()
		);
		for (const ref of refs) {
			expect(ref, `${path}: a <use> points inside the page`).toMatch(/^#sg-/);
			expect($(`[id="${ref.slice(1)}"]`).length, `${path}: ${ref} is drawn once`).toBe(1);
		}
		// band marks and stock badges place drawings: the catalogue and every converter page show some
		if (/^\/converters(\/[^?]+)?$/.test(path))
			expect(refs.size, `${path} places rulers or stock shapes`).toBeGreaterThanOrEqual(path === '/converters' ? 2 : 1);
	}
});
