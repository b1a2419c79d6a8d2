/**
 * Screenshots of the public pages at a phone width (390 px) and a desktop width (1280 px), in
 * the light and the dark theme, into tests/artifacts/screens/all/ for a person to look at.
 * Checks what a machine can: the page renders, no sideways scrolling, every band mark has its
 * accessible words.
 */
import { expect, test } from '@playwright/test';
import { mkdirSync } from 'node:fs';
import { resolve } from 'node:path';
import { SCREENS, captureFullPage, expectNoSidewaysScroll } from './support/guide-pages';
import { SCREEN_PAGES } from './support/public-pages';

const OUT = resolve(SCREENS, 'all');

for (const theme of ['light', 'dark'] as const) {
	for (const width of [390, 1280]) {
		test.describe(`${theme} theme at ${width} px`, () => {
			test.use({ colorScheme: theme, viewport: { width, height: width < 600 ? 844 : 900 } });
			test('public pages render, fit the width and label their band marks', async ({ page }) => {
				test.setTimeout(240_000);
				mkdirSync(OUT, { recursive: true });
				for (const { name, path } of SCREEN_PAGES) {
					const res = await page.goto(path);
					expect(res?.status(), `${path} answers`).toBe(200);
					await page.waitForLoadState('networkidle');
					expect(await page.evaluate(() => document.documentElement.classList.contains('dark'))).toBe(theme === 'dark');
					await expectNoSidewaysScroll(page, `${path} at ${width} px`);
					for (const label of await page
						.locator('.band-mark')
						.evaluateAll((els) => els.map((e) => e.getAttribute('aria-label') ?? ''))) {
						expect(label, `${path}: band mark label`).toMatch(/^(Level grade|\d+ IRE step: worst channel)/);
						expect(label).not.toMatch(/of 5/);
					}
					// Scroll through once, as a reader would, so the sections that load when seen are drawn.
					await page.evaluate(async () => {
						for (let y = 0; y < document.body.scrollHeight; y += window.innerHeight / 2) {
							window.scrollTo(0, y);
							await new Promise((r) => setTimeout(r, 60));
						}
						window.scrollTo(0, 0);
					});
					await page.waitForLoadState('networkidle');
					await captureFullPage(page, resolve(OUT, `${name}-${width}-${theme}.png`));
				}
			});
		});
	}
}
