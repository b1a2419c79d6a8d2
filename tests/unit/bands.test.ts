/**
 * The band mark's figures: the deviation ruler, the reason words and the e-mail's drawing.
 * Readings are on the analog video scale where 100 IRE is 700 mV above blanking, i.e. 7 mV
 * per IRE (VESA Video Signal Standard, 0.7 V white into 75 ohm); the bands themselves are the
 * house rubric (src/lib/levels/rubric.ts), not a standard, so the checks here are against it.
 */
import { describe, expect, it } from 'vitest';
import {
	RULER_END_IRE,
	RULER_TICKS_IRE,
	bandForDeviation,
	bandReasonOf,
	bandZoneIre,
	markAriaLabel,
	markHidesMarker,
	markText,
	reportMark,
	rulerFraction,
	rulerGeometry,
	rulerX,
	bandMarkView
} from '../../src/lib/components/bands';
import { analyzeLevels, RUBRIC } from '../../src/lib/levels';
import { renderAlertMessage, type AlertView } from '../../src/lib/server/alerts/message';

const STEPS = [0, 10, 20, 30, 40, 50, 60, 70, 80, 90, 100];
/** Readings of an ideal source, 7 mV per IRE, with per-step changes. */
function ramp(change: (ire: number, ch: 'r' | 'g' | 'b', mv: number) => number = (_i, _c, mv) => mv) {
	return STEPS.map((ire) => ({
		ire,
		r: change(ire, 'r', ire * 7),
		g: change(ire, 'g', ire * 7),
		b: change(ire, 'b', ire * 7)
	}));
}

describe('the deviation ruler', () => {
	it("ticks at the rubric's deviation limits, 1, 2, 3.5 and 6 IRE, and runs beyond the last", () => {
		expect(RULER_TICKS_IRE).toEqual(RUBRIC.bands.map((b) => b.maxDeviationIre));
		expect(RULER_TICKS_IRE).toEqual([1, 2, 3.5, 6]);
		expect(RULER_END_IRE).toBeGreaterThan(6);
	});

	it('places a deviation proportionally and pins anything beyond the end to the end', () => {
		expect(rulerFraction(0)).toBe(0);
		expect(rulerFraction(2)).toBeCloseTo(2 / RULER_END_IRE);
		expect(rulerFraction(40)).toBe(1);
		expect(rulerFraction(-1)).toBe(0);
		expect(rulerFraction(Number.NaN)).toBe(0);
	});

	it('gives each band its zone between two ticks', () => {
		expect(bandZoneIre('exact')).toEqual([0, 1]);
		expect(bandZoneIre('fair')).toEqual([2, 3.5]);
		expect(bandZoneIre('failing')).toEqual([6, RULER_END_IRE]);
		expect(bandForDeviation(1)).toBe('exact');
		expect(bandForDeviation(1.01)).toBe('close');
		expect(bandForDeviation(6.5)).toBe('failing');
	});
});

describe("the ruler's shared drawing", () => {
	it('puts a tick at 0 and at each band limit, and the dashed part from the last limit to the end', () => {
		for (const size of ['sm', 'md'] as const) {
			const g = rulerGeometry(size);
			const ticks = [...g.rules.matchAll(/M([\d.]+) [\d.]+V/g)].map((m) => Number(m[1]));
			expect(ticks).toEqual([0, ...RULER_TICKS_IRE].map((ire) => rulerX(g, ire)));
			expect(ticks[0]).toBe(g.pad);
			const last = rulerX(g, RULER_TICKS_IRE[RULER_TICKS_IRE.length - 1]);
			expect(g.beyond).toBe(`M${last} ${g.base}H${g.pad + g.w}`);
			// the right end of the ruler is where a deviation past RULER_END_IRE sits
			expect(rulerX(g, RULER_END_IRE * 3)).toBe(g.pad + g.w);
		}
	});
	it('draws what each mark drew inline before the shared drawing (paths as rendered then)', () => {
		expect(rulerGeometry('sm')).toMatchObject({
			rules: 'M5.5 6V13M13.5 6V13M21.5 6V13M33.5 6V13M53.5 6V13M5.5 10H53.5',
			beyond: 'M53.5 10H69.5'
		});
		expect(rulerGeometry('md')).toMatchObject({
			rules: 'M6.5 8V17M18.5 8V17M30.5 8V17M48.5 8V17M78.5 8V17M6.5 13H78.5',
			beyond: 'M78.5 13H102.5'
		});
	});
	it('is the same drawing on every call, so marks of one size share it', () => {
		expect(rulerGeometry('sm')).toBe(rulerGeometry('sm'));
		expect(rulerGeometry('md').w).toBeGreaterThan(rulerGeometry('sm').w);
	});
});

describe('what a band mark draws', () => {
	it('puts the marker at the worst deviation, inside the band zone it shades', () => {
		const v = bandMarkView({ band: 'close', deviationIre: 1.3, size: 'sm' });
		const g = rulerGeometry('sm');
		expect(v.markerX).toBeCloseTo(rulerX(g, 1.3), 2);
		expect(v.zone!.x).toBe(rulerX(g, RULER_TICKS_IRE[0]));
		expect(v.zone!.x + v.zone!.width).toBeCloseTo(rulerX(g, RULER_TICKS_IRE[1]), 9);
		expect(v.text).toBe('Close · 1.3 IRE');
		expect(v.beyond).toBe(false);
	});
	it('draws no marker when a rule set the band, and an arrow past the ruler end', () => {
		const crushed = bandMarkView({ band: 'failing', deviationIre: 9, reason: 'crushed', size: 'md' });
		expect(crushed.markerX).toBeNull();
		expect(crushed.zone).toBeNull();
		expect(crushed.text).toBe('Failing · crushed');
		const far = bandMarkView({ band: 'failing', deviationIre: RULER_END_IRE + 4, size: 'md' });
		expect(far.beyond).toBe(true);
		expect(far.markerX).toBe(rulerX(rulerGeometry('md'), RULER_END_IRE));
	});
	it('describes a zone in words for a watch ("this band or better") and a legend', () => {
		const watch = bandMarkView({ band: 'fair', zone: 'at-least', size: 'sm' });
		expect(watch.text).toBe('Fair or better');
		expect(watch.aria).toBe(`Level grade Fair or better: worst deviation up to ${RULER_TICKS_IRE[2]} IRE`);
		expect(watch.zone!.x).toBe(rulerGeometry('sm').pad);
		expect(watch.markerX).toBeNull();
		const legend = bandMarkView({ band: 'failing', zone: 'band', size: 'sm' });
		expect(legend.aria).toBe(`Level grade Failing: worst deviation from over ${RULER_TICKS_IRE[3]} IRE`);
	});
	it('uses a given label as its accessible name', () => {
		expect(bandMarkView({ band: 'exact', deviationIre: 0.2, size: 'sm', label: '50 IRE step' }).aria).toBe(
			'50 IRE step'
		);
	});
});

describe('reasons taken from real level reports', () => {
	it('a clean ramp shows its figure: band and deviation agree, no reason', () => {
		const report = analyzeLevels({ steps: ramp((ire, _c, mv) => mv + (ire === 50 ? 9.1 : 0)), fullScaleMv: 700 });
		expect(report.worstDeviationIre).toBeCloseTo(1.3, 5);
		const mark = reportMark(report);
		expect(mark).toEqual({ band: 'close', deviation: report.worstDeviationIre, reason: null });
		expect(markText({ band: mark.band, deviationIre: mark.deviation, reason: mark.reason })).toBe('Close · 1.3 IRE');
	});

	it('a crushed 10 IRE step (below the shadow floor) fails by rule: reason word, no marker', () => {
		// 10 IRE should read 70 mV; 25 mV is under the rubric's floor of 60 % of it.
		const report = analyzeLevels({ steps: ramp((ire, _c, mv) => (ire === 10 ? 25 : mv)), fullScaleMv: 700 });
		expect(report.band).toBe('failing');
		expect(bandReasonOf(report)).toBe('crushed');
		const m = { band: report.band, deviationIre: report.worstDeviationIre, reason: bandReasonOf(report) };
		expect(markHidesMarker(m)).toBe(true);
		expect(markText(m)).toBe('Failing · crushed');
		expect(markAriaLabel(m)).toBe('Level grade: Failing · crushed');
	});

	it('a step lower than the one below fails by rule with its own word', () => {
		const report = analyzeLevels({ steps: ramp((ire, _c, mv) => (ire === 60 ? 7 * 49 : mv)), fullScaleMv: 700 });
		expect(report.band).toBe('failing');
		expect(bandReasonOf(report)).toBe('reversed');
		expect(markText({ band: 'failing', reason: 'reversed', deviationIre: report.worstDeviationIre })).toBe(
			'Failing · reversed step'
		);
	});

	it('a band set by the channel spread keeps its marker and says "spread"', () => {
		// Blue alone 3 IRE high at one step: deviation 3 IRE (Fair's zone), spread 3 IRE (over Fair's 2.5).
		const report = analyzeLevels({
			steps: ramp((ire, c, mv) => mv + (ire === 70 && c === 'b' ? 21 : 0)),
			fullScaleMv: 700
		});
		expect(report.worstDeviationIre).toBeCloseTo(3, 5);
		expect(report.band).toBe('poor');
		expect(bandReasonOf(report)).toBe('spread');
		const m = { band: report.band, deviationIre: report.worstDeviationIre, reason: 'spread' };
		expect(markHidesMarker(m)).toBe(false);
		expect(markText(m)).toBe('Poor · 3.0 IRE · spread');
		expect(markAriaLabel(m)).toBe('Level grade: Poor · 3.0 IRE worst deviation · spread: the channels disagree');
	});
});

describe('words of the mark', () => {
	it('says "Not graded" without a band, and "Expected" for an expected grade', () => {
		expect(markText({ band: null })).toBe('Not graded');
		expect(markHidesMarker({ band: null, deviationIre: 1 })).toBe(true);
		expect(markText({ band: 'fair', deviationIre: 2.64, expected: true })).toBe('Expected Fair · 2.6 IRE');
		expect(markAriaLabel({ band: 'close', deviationIre: 1.25 })).toBe('Level grade: Close · 1.3 IRE worst deviation');
	});

	it('never counts segments out of five', () => {
		for (const band of ['exact', 'close', 'fair', 'poor', 'failing'] as const) {
			expect(markText({ band, deviationIre: 1 })).not.toMatch(/of 5/);
			expect(markAriaLabel({ band, deviationIre: 1 })).not.toMatch(/of 5/);
		}
	});
});

describe('the mark in an alert e-mail', () => {
	const view: AlertView = {
		kind: 'restock',
		at: new Date('2026-03-01T10:00:00Z'),
		converter: { slug: 'x', brand: 'Brand', model: 'Model' },
		shop: { name: 'Shop', region: 'eu', shipsTo: ['eu'] },
		priceMinor: 1990,
		currency: 'EUR',
		converted: null,
		band: 'close',
		deviationIre: 1.3,
		bandReason: null,
		revisionCode: 'B',
		finding: null,
		previousRunMs: null,
		buyUrl: 'https://shop.example/p',
		converterUrl: 'https://scopegrade.example/converters/x'
	};
	const links = {
		manageUrl: 'https://scopegrade.example/account/watches',
		unsubscribeUrl: 'https://scopegrade.example/u/t'
	};

	it('draws the ruler with table cells and one marker, and says the words in both parts', () => {
		const m = renderAlertMessage(view, links);
		expect(m.html).not.toMatch(/<img/i);
		expect(m.html.match(/▼/g)).toHaveLength(1);
		// the marker sits in the cell for 1.0-1.5 IRE: the third of the ruler's 0.5 IRE cells
		const at = m.html.indexOf('▼');
		const row = m.html.slice(m.html.lastIndexOf('<tr>', at), m.html.indexOf('</tr>', at));
		expect(
			row
				.split('<td')
				.slice(1)
				.findIndex((cell) => cell.includes('▼'))
		).toBe(2);
		expect(m.html).toContain('Close · 1.3 IRE, revision B');
		expect(m.text).toContain('Level grade:   Close · 1.3 IRE, revision B');
		expect(m.html + m.text).not.toMatch(/of 5/);
	});

	it('draws no marker for a band set by rule', () => {
		const m = renderAlertMessage({ ...view, band: 'failing', deviationIre: 4.2, bandReason: 'crushed' }, links);
		expect(m.html).not.toContain('▼');
		expect(m.text).toContain('Failing · crushed');
	});
});
