/** Page helpers for the public guide journeys: canvas checks, axe, screenshots. */
import AxeBuilder from '@axe-core/playwright';
import { errors, expect, type Locator, type Page } from '@playwright/test';
import { mkdirSync } from 'node:fs';
import { resolve } from 'node:path';

export const SCREENS = resolve('tests/artifacts/screens');

/** Count painted (non-transparent) pixels of a canvas. */
export async function paintedPixels(canvas: Locator): Promise<number> {
	return canvas.evaluate((el) => {
		const c = el as HTMLCanvasElement;
		const ctx = c.getContext('2d');
		if (!ctx || c.width === 0 || c.height === 0) return 0;
		const d = ctx.getImageData(0, 0, c.width, c.height).data;
		let n = 0;
		for (let i = 3; i < d.length; i += 4) if (d[i] !== 0) n++;
		return n;
	});
}

/** Distinct colours on a canvas (a blank or flat canvas has one or two). */
export async function distinctColours(canvas: Locator): Promise<number> {
	return canvas.evaluate((el) => {
		const c = el as HTMLCanvasElement;
		const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
		const seen = new Set<number>();
		for (let i = 0; i < d.length; i += 16) seen.add((d[i] << 16) | (d[i + 1] << 8) | d[i + 2]);
		return seen.size;
	});
}

/** No serious or critical axe violations (WCAG 2 A/AA rules). */
export async function expectAccessible(page: Page, label: string) {
	const result = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze();
	const bad = result.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
	expect(
		bad.map(
			(v) =>
				`${v.id}: ${v.nodes
					.map((n) => n.target.join(' '))
					.slice(0, 3)
					.join(' | ')}`
		),
		`${label}: serious/critical axe violations`
	).toEqual([]);
}

export async function screenshot(page: Page, name: string) {
	mkdirSync(SCREENS, { recursive: true });
	await captureFullPage(page, resolve(SCREENS, `${name}.png`));
}

/**
 * A full-page screenshot for a person to look at. Headless Chromium now and then never delivers
 * the frame for a full-page capture (seen once in many runs, on a page that had drawn fine;
 * microsoft/playwright#28995 reports the same hang), which used to hold a test until its
 * timeout. A capture gets 30 s; after that the page is loaded again and captured once more, so a
 * page that really cannot be drawn still fails.
 */
export async function captureFullPage(page: Page, path: string) {
	try {
		await page.screenshot({ path, fullPage: true, timeout: 30_000 });
	} catch (err) {
		if (!(err instanceof errors.TimeoutError)) throw err;
		console.warn(`full-page capture of ${page.url()} timed out; loading the page again`);
		await page.reload();
		await page.waitForLoadState('networkidle');
		await page.screenshot({ path, fullPage: true, timeout: 60_000 });
	}
}

/** The page fits the viewport width (no sideways scrolling on a phone). */
export async function expectNoSidewaysScroll(page: Page, label: string) {
	const overflow = await page.evaluate(
		() => document.documentElement.scrollWidth - document.documentElement.clientWidth
	);
	expect(overflow, `${label} scrolls sideways by ${overflow}px`).toBeLessThanOrEqual(1);
}
