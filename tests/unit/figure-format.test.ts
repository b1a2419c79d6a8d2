import { describe, expect, it } from 'vitest';
import { figureFormat, signedFigure } from '$lib/components/format';

describe('figureFormat (Stat.svelte)', () => {
	it('makes one formatter per kind of figure and reuses it', () => {
		expect(figureFormat(1, true)).toBe(figureFormat(1, true));
		expect(figureFormat(1, true)).not.toBe(figureFormat(1, false));
		expect(figureFormat(undefined, false)).not.toBe(figureFormat(0, false));
	});

	it('formats as a fresh Intl.NumberFormat with the same options would (ECMA-402)', () => {
		for (const [digits, signed, value] of [
			[1, true, -0.25],
			[1, true, 3.04],
			[undefined, false, 702.35],
			[0, false, 12.5],
			[2, true, 0]
		] as const) {
			const fresh = new Intl.NumberFormat('en', {
				minimumFractionDigits: digits ?? 0,
				maximumFractionDigits: digits ?? 1,
				signDisplay: signed ? 'exceptZero' : 'auto'
			});
			expect(figureFormat(digits, signed).format(value)).toBe(fresh.format(value));
		}
		// from memory of the ECMA-402 rounding (half-expand) and exceptZero rules
		expect(figureFormat(1, true).format(3.04)).toBe('+3.0');
		expect(figureFormat(2, true).format(0)).toBe('0.00');
	});
});

describe('signedFigure (step tables)', () => {
	// common practice in tables of measurements: the sign follows the figure as printed, so no "-0.0"
	it('signs what it shows, in Latin-1', () => {
		expect(signedFigure(0.4)).toBe('+0.4');
		expect(signedFigure(-1.44)).toBe('-1.4');
		expect(signedFigure(2.06)).toBe('+2.1');
		expect(signedFigure(-7.1, 0)).toBe('-7');
		// rounds to zero: no sign, never "-0.0"
		expect(signedFigure(-0.04)).toBe('0.0');
		expect(signedFigure(0.04)).toBe('0.0');
		expect(signedFigure(0)).toBe('0.0');
		expect(/^[\x20-\x7e]+$/.test(signedFigure(-123.456, 2))).toBe(true);
	});
});
