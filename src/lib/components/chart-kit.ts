/**
 * Chart.js, loaded on demand: only pages that draw a chart import this module's loader, so
 * the catalogue and other pages ship no chart code. Also reads the theme's colours (space-
 * separated RGB triplets in CSS variables) so charts follow light and dark themes.
 */
import type { Chart as ChartType } from 'chart.js';

let loading: Promise<typeof ChartType> | null = null;

/** The Chart class with the pieces our line charts use registered once. */
export function loadChart(): Promise<typeof ChartType> {
	loading ??= import('chart.js').then((m) => {
		m.Chart.register(m.LineController, m.LineElement, m.PointElement, m.LinearScale, m.Tooltip, m.Legend, m.Filler);
		return m.Chart;
	});
	return loading;
}

/** rgb() colour of a theme variable, with optional alpha. */
export function themeColour(name: string, alpha = 1): string {
	const v = getComputedStyle(document.documentElement).getPropertyValue(`--${name}`).trim() || '128 128 128';
	return alpha === 1 ? `rgb(${v})` : `rgb(${v} / ${alpha})`;
}

/** Call `fn` when the theme class on <html> changes; returns a stop function. */
export function onThemeChange(fn: () => void): () => void {
	const obs = new MutationObserver(fn);
	obs.observe(document.documentElement, { attributes: true, attributeFilter: ['class'] });
	return () => obs.disconnect();
}

/** Shared scale styling: a faint scope-like graticule. */
export function graticuleScale() {
	return {
		grid: { color: themeColour('grid', 0.16), tickColor: themeColour('grid', 0.3) },
		border: { color: themeColour('grid', 0.35) },
		ticks: { color: themeColour('ink-muted'), font: { family: "'Inter Variable', system-ui, sans-serif", size: 11 } },
		title: { color: themeColour('ink-muted'), font: { size: 11 } }
	};
}
