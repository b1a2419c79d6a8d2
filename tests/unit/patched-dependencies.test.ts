/**
 * The patches in patches/ (applied by patch-package on install) keep each request's closures and
 * getters out of V8's old generation. V8 allocates a function literal assigned to a property
 * (`obj.f = () => ...`) and every accessor pair there; from there they keep what they close over (a
 * query's rows, a request, a rendered page) alive through every minor GC until the next full one,
 * which made most of what a page allocated survive into the old generation. Two kinds of check: a
 * Node child with V8's native syntax (`%InYoungGeneration`, V8's own test hook) shows where the
 * objects really are, and a parse of the patched request-path modules (acorn, ECMAScript's
 * AssignmentExpression) shows no function literal is assigned to a property.
 */
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { parse } from 'acorn';

const ROOT = resolve(__dirname, '../..');
const pkgDir = (name: string) => resolve(ROOT, 'node_modules', name);
const kitUrl = pathToFileURL(resolve(pkgDir('@sveltejs/kit'), 'src/utils/url.js')).href;

/** Run an ES module with V8's native syntax in a child Node; it prints one JSON line. */
function probe(code: string): Record<string, unknown> {
	const r = spawnSync(process.execPath, ['--allow-natives-syntax', '--input-type=module', '-e', code], {
		cwd: ROOT,
		encoding: 'utf8'
	});
	if (r.status !== 0) throw new Error(`probe failed: ${r.stderr}`);
	return JSON.parse(r.stdout.trim().split('\n').pop()!);
}

describe('where V8 allocates closures (the rule the patches rely on)', () => {
	it('puts a function literal assigned to a property in the old generation, and a closure made by a call in the young one', () => {
		const out = probe(`
			const o = {};
			o.literal = () => 1;
			const made = (x) => () => x;
			o.made = made(1);
			const p = {};
			p.bound = function () {}.bind(null);
			console.log(JSON.stringify({ literal: %InYoungGeneration(o.literal), made: %InYoungGeneration(o.made), bound: %InYoungGeneration(p.bound) }));
		`);
		expect(out).toEqual({ literal: false, made: true, bound: true });
	});
});

describe('patched postgres.js', () => {
	it('makes each query’s resolve and reject young, and still settles the query', () => {
		const out = probe(`
			import postgres from 'postgres';
			const sql = postgres('postgres://nobody@127.0.0.1:9/none', { max: 1 });
			const q = sql.unsafe('select 1');
			const young = %InYoungGeneration(q.resolve) && %InYoungGeneration(q.reject);
			q.active = true;
			q.resolve([{ one: 1 }]);
			const rows = await q.catch(() => null);
			console.log(JSON.stringify({ young, active: q.active, rows }));
			process.exit(0);
		`);
		expect(out).toEqual({ young: true, active: false, rows: [{ one: 1 }] });
	});
});

describe('patched SvelteKit make_trackable', () => {
	it('shares one getter per URL property among tracked URLs, and still tracks and reports the source URL', () => {
		const out = probe(`
			import { inspect } from 'node:util';
			import { make_trackable } from '${kitUrl}';
			let tracked = 0; const params = [];
			const a = make_trackable(new URL('https://example.test/converters?region=eu'), () => tracked++, (p) => params.push(p));
			const b = make_trackable(new URL('https://example.test/other'), () => {}, () => {});
			const getter = (u, k) => Object.getOwnPropertyDescriptor(u, k).get;
			const shared = ['href', 'pathname', 'search', 'toString', 'toJSON'].every((k) => getter(a, k) === getter(b, k));
			const before = tracked;
			const href = a.href, pathname = a.pathname, text = String(a);
			const region = a.searchParams.get('region');
			let hash = 'readable';
			try { a.hash; } catch { hash = 'refused'; }
			const inspectFn = a[Symbol.for('nodejs.util.inspect.custom')];
			console.log(JSON.stringify({
				shared, href, pathname, text, region, params, tracked: tracked - before, hash,
				inspectYoung: %InYoungGeneration(inspectFn), shown: inspect(a).includes('/converters?region=eu')
			}));
		`);
		expect(out).toEqual({
			shared: true,
			href: 'https://example.test/converters?region=eu',
			pathname: '/converters',
			text: 'https://example.test/converters?region=eu',
			region: 'eu',
			params: ['region'],
			tracked: 3,
			hash: 'refused',
			inspectYoung: true,
			shown: true
		});
	});
});

describe('patched Svelte asClassComponent (the render SvelteKit calls)', () => {
	it('shares the head and html getters among renders and still returns each render’s HTML', () => {
		const out = probe(`
			import { asClassComponent } from 'svelte/legacy';
			const Page = asClassComponent(function ($$renderer, props) { $$renderer.push('<p>' + props.word + '</p>'); });
			const one = Page.render({ word: 'one' });
			const two = Page.render({ word: 'two' });
			const getter = (r, k) => Object.getOwnPropertyDescriptor(r, k).get;
			console.log(JSON.stringify({ shared: getter(one, 'html') === getter(two, 'html') && getter(one, 'head') === getter(two, 'head'), one: one.html, two: two.html, head: one.head }));
		`);
		// Svelte wraps a component's output in its hydration markers
		expect(out).toEqual({
			shared: true,
			one: '<!--[--><p>one</p><!--]-->',
			two: '<!--[--><p>two</p><!--]-->',
			head: ''
		});
	});
});

/** Function literals assigned to a property (any assignment operator) in a module, by line. */
function assignedFunctionLiterals(file: string): number[] {
	const source = readFileSync(file, 'utf8');
	const lines: number[] = [];
	const visit = (node: unknown): void => {
		if (!node || typeof node !== 'object') return;
		const n = node as {
			type?: string;
			left?: { type: string };
			right?: { type: string };
			loc?: { start: { line: number } };
		};
		if (
			n.type === 'AssignmentExpression' &&
			n.left?.type === 'MemberExpression' &&
			(n.right?.type === 'ArrowFunctionExpression' || n.right?.type === 'FunctionExpression')
		)
			lines.push(n.loc!.start.line);
		for (const value of Object.values(node)) {
			if (Array.isArray(value)) value.forEach(visit);
			else if (value && typeof value === 'object' && 'type' in value) visit(value);
		}
	};
	visit(parse(source, { ecmaVersion: 'latest', sourceType: 'module', locations: true }));
	return lines;
}

describe('patched request-path modules assign no function literal to a property', () => {
	const line = (file: string, text: string) =>
		readFileSync(file, 'utf8')
			.split('\n')
			.findIndex((l) => l.includes(text)) + 1;

	it('SvelteKit respond.js and url.js', () => {
		const kit = pkgDir('@sveltejs/kit');
		expect(assignedFunctionLiterals(resolve(kit, 'src/runtime/server/respond.js'))).toEqual([]);
		expect(assignedFunctionLiterals(resolve(kit, 'src/utils/url.js'))).toEqual([]);
	});

	it('Svelte legacy-server.js', () => {
		expect(assignedFunctionLiterals(resolve(pkgDir('svelte'), 'src/legacy/legacy-server.js'))).toEqual([]);
	});

	it('postgres.js query.js, except its cursor (not used per page)', () => {
		for (const dir of ['src', 'cf/src']) {
			const file = resolve(pkgDir('postgres'), dir, 'query.js');
			const cursor = line(file, 'this.cursorFn = value =>');
			expect(assignedFunctionLiterals(file)).toEqual([cursor, cursor + 4, cursor + 5]);
		}
	});

	it('Auth.js handle, except while building', () => {
		const file = resolve(pkgDir('@auth/sveltekit'), 'dist/index.js');
		expect(assignedFunctionLiterals(file)).toEqual([line(file, 'event.locals.auth ??= async () => null')]);
	});
});
