import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import {
	LevelInputError,
	TRACE_WARNING_WORDS,
	analyzeLevels,
	importTrace,
	traceToLevelInput
} from '../../../src/lib/levels';
import { renderCsv, synthesize } from '../../../fixtures/traces/generate';
import { LINE, TRACE_SPECS } from '../../../fixtures/traces/specs';

// Synthetic traces (fixtures/traces/specs.ts): known levels plus noise,
// ringing and a sync pulse. The 2 mV recovery tolerance is our own target.
const dir = join(__dirname, '../../../fixtures/traces');
const read = (file: string) => readFileSync(join(dir, file), 'utf8');
const good = TRACE_SPECS.filter((s) => !s.file.startsWith('bad-'));

function rejects(text: string, re: RegExp, options?: Parameters<typeof importTrace>[1]) {
	let err: unknown;
	try {
		importTrace(text, options);
	} catch (e) {
		err = e;
	}
	expect(err).toBeInstanceOf(LevelInputError);
	expect((err as Error).message).toMatch(re);
}

describe('fixtures', () => {
	it.each(TRACE_SPECS.map((s) => [s.file, s] as const))(
		'%s is up to date with generate.ts and under 200 KB',
		(file, spec) => {
			const text = read(file);
			expect(text).toBe(renderCsv(spec));
			expect(text.length).toBeLessThan(200 * 1024);
		}
	);
	it('good-3ch.csv is a clean 3-channel trace with a header', () => {
		expect(read('good-3ch.csv').split('\n')[0]).toBe('Time (s),Red (V),Green (V),Blue (V)');
	});
});

describe('importTrace recovers the levels within 2 mV', () => {
	it.each(good.map((s) => [s.file, s] as const))('%s', (file, spec) => {
		const t = importTrace(read(file));
		expect(t.channels.map((c) => c.channel)).toEqual(spec.channels.map((c) => c.name));
		expect(t.channels.every((c) => c.unit === spec.unit)).toBe(true);
		for (const c of spec.channels) {
			const plateaus = t.plateaus[c.name]!;
			expect(plateaus).toHaveLength(11);
			c.levels.forEach((mv, k) => {
				expect(Math.abs(t.steps[k][c.name]! - mv)).toBeLessThan(2);
				expect(plateaus[k].ire).toBe(10 * k);
				// the stretch used lies inside the nominal step (common-practice line timing in specs.ts);
				// on a falling staircase 0 IRE is the last step in time, next to the front porch
				const slot = spec.descending ? 10 - k : k;
				const start = spec.t0 + (LINE.leadBlankUs + LINE.syncUs + LINE.backPorchUs + slot * LINE.stepUs) * 1e-6;
				const blankSide = spec.descending ? 0 : k === 0 ? 6e-6 : 0;
				const porchSide = spec.descending && k === 0 ? 20e-6 : 0;
				expect(plateaus[k].start).toBeGreaterThanOrEqual(start - blankSide - 0.2e-6);
				expect(plateaus[k].end).toBeLessThanOrEqual(start + LINE.stepUs * 1e-6 + porchSide + 0.2e-6);
			});
		}
		// the noise it saw is the noise we added
		expect(t.noiseMv).toBeGreaterThan(spec.noiseMv * 0.7);
		expect(t.noiseMv).toBeLessThan(spec.noiseMv * 1.4);
	});

	it('reads units from the header or, without one, from the magnitudes', () => {
		expect(importTrace(read('good-3ch.csv')).channels[0]).toMatchObject({
			unit: 'V',
			unitFrom: 'header',
			column: 'Red (V)'
		});
		expect(importTrace(read('crushed-1ch-semicolon-mv.csv')).channels[0]).toMatchObject({
			unit: 'mV',
			unitFrom: 'header',
			channel: 'g'
		});
		const noHeader = importTrace(read('bluehigh-3ch-noheader-mv.csv'));
		expect(noHeader.channels[0]).toMatchObject({ unit: 'mV', unitFrom: 'magnitude' });
		expect(noHeader.warnings).toEqual(
			expect.arrayContaining(['no-header', 'units-from-magnitude', 'channel-order-assumed'])
		);
		expect(importTrace(read('clipped-1ch-noheader-v.csv')).channels[0]).toMatchObject({
			unit: 'V',
			unitFrom: 'magnitude'
		});
	});

	it('splits a stretch holding two equal steps (clipped 90 and 100 IRE) by the step duration', () => {
		const t = importTrace(read('clipped-1ch-noheader-v.csv'));
		expect(t.warnings).toContain('equal-steps-split');
		expect(t.steps[9].g).toBeCloseTo(690, 0);
		expect(t.steps[10].g).toBeCloseTo(690, 0);
		expect(t.plateaus.g![10].start).toBeGreaterThan(t.plateaus.g![9].end);
	});

	it('keeps decimated samples for drawing unless told not to', () => {
		const t = importTrace(read('good-3ch.csv'));
		expect(t.samples!.time.length).toBe(LINE.samples);
		expect(t.samples!.mv.b!.length).toBe(LINE.samples);
		expect(importTrace(read('good-3ch.csv'), { includeSamples: false }).samples).toBeUndefined();
	});

	it('copes with CRLF, a units row, tab separators, quoted fields and trailing separators', () => {
		const spec = TRACE_SPECS[0];
		const base = renderCsv(spec).trim().split('\n');
		const crlf = base.join('\r\n');
		expect(importTrace(crlf).steps[5].g).toBeCloseTo(spec.channels[1].levels[5], 0);
		const withUnits = ['Time,R,G,B', 's,V,V,V', ...base.slice(1)].join('\n');
		const u = importTrace(withUnits);
		expect(u.channels[2]).toMatchObject({ channel: 'b', unit: 'V', unitFrom: 'header' });
		const tabbed = base.map((l) => l.replaceAll(',', '\t')).join('\n');
		expect(importTrace(tabbed).steps[10].r).toBeCloseTo(spec.channels[0].levels[10], 0);
		const quoted = base
			.map((l, i) =>
				i === 0
					? l
							.split(',')
							.map((f) => `"${f}"`)
							.join(',')
					: l + ','
			)
			.join('\n');
		expect(importTrace(quoted).channels.map((c) => c.channel)).toEqual(['r', 'g', 'b']);
	});

	it('honours forced units and channel mapping', () => {
		const t = importTrace(read('bluehigh-3ch-noheader-mv.csv'), { units: 'mV', channels: ['b', 'g', 'r'] });
		expect(t.channels.map((c) => c.channel)).toEqual(['b', 'g', 'r']);
		expect(t.channels[0].unitFrom).toBe('option');
		expect(t.steps[10].r).toBeCloseTo(770, 0);
	});

	it('feeds the analysis: good-3ch grades well, blue-high tints blue, doubled levels flag the missing load', () => {
		const goodReport = analyzeLevels(traceToLevelInput(importTrace(read('good-3ch.csv'))));
		expect(['exact', 'close']).toContain(goodReport.band);
		const blue = analyzeLevels(traceToLevelInput(importTrace(read('bluehigh-3ch-noheader-mv.csv'))));
		expect(blue.tint.white.direction).toBe('blue');
		const unterminated = analyzeLevels(traceToLevelInput(importTrace(read('unterminated-3ch.csv'))));
		expect(unterminated.warnings).toContain('possibly-unterminated');
		const crushed = importTrace(read('crushed-1ch-semicolon-mv.csv'));
		expect(() => traceToLevelInput(crushed)).toThrow(/green only; measure red and blue too/);
		const report = analyzeLevels(traceToLevelInput(crushed, { copyMissing: true }));
		expect(report.band).toBe('failing');
		expect(report.findings.find((f) => f.code === 'shadows-dark')!.text).toMatch(
			/^Shadows too dark: 28(\.\d)? mV at 10 IRE/
		);
	});
});

describe('scope exports as they really come (fixtures made by generate.ts, our own invented layouts)', () => {
	it('skips a preamble of scope settings and a sample-number column, and says so', () => {
		const t = importTrace(read('preamble-index-3ch.csv'));
		expect(t.warnings).toEqual(expect.arrayContaining(['preamble-skipped', 'index-column-skipped']));
		expect(t.channels.map((c) => c.column)).toEqual(['Red (V)', 'Green (V)', 'Blue (V)']);
		expect(t.steps[10]).toMatchObject({ ire: 100 });
		expect(t.steps[10].r!).toBeCloseTo(702, -0.5);
		// the time column (not the index) dates the plateaus: microseconds, not sample numbers
		expect(t.plateaus.g![0].start).toBeLessThan(1e-3);
	});
	it('semicolon with a decimal point and a units row under the names', () => {
		const t = importTrace(read('semicolon-point-unitsrow-3ch.csv'));
		expect(t.channels[0]).toMatchObject({ channel: 'r', column: 'Red', unit: 'mV', unitFrom: 'header' });
		expect(t.steps[10].g!).toBeCloseTo(680, -0.5);
	});
	it('tab separator with a decimal comma and trailing empty fields', () => {
		const t = importTrace(read('tab-comma-trailing-3ch.csv'));
		expect(t.channels.map((c) => c.unit)).toEqual(['V', 'V', 'V']);
		expect(t.steps[10].b!).toBeCloseTo(730, -0.5);
		expect(t.warnings).not.toContain('rows-skipped');
	});
	it('a falling staircase is read in IRE order (0 IRE first) with a warning', () => {
		const t = importTrace(read('descending-3ch.csv'));
		expect(t.warnings).toContain('descending-staircase');
		expect(t.steps.map((s) => s.ire)).toEqual([0, 10, 20, 30, 40, 50, 60, 70, 80, 90, 100]);
		expect(t.steps[2].b!).toBeCloseTo(150, -0.5); // the odd step keeps its place
		expect(t.steps[10].r!).toBeCloseTo(700, -0.5);
		expect(t.plateaus.r![0].start).toBeGreaterThan(t.plateaus.r![10].start);
		expect(TRACE_WARNING_WORDS['descending-staircase']).toMatch(/IRE order/);
	});
	it('a staircase with another step count is refused saying how many steps it found, never relabelled', () => {
		rejects(read('bad-9-steps.csv'), /found 9 step levels rising one after another, expected 11/);
		rejects(
			read('bad-16-steps.csv'),
			/^16 steps on green \(Green \(V\)\), expected 11: found a staircase of 16 levels/
		);
		// falling the other way round too
		const spec = TRACE_SPECS.find((s) => s.file === 'bad-16-steps.csv')!;
		rejects(renderCsv({ ...spec, descending: true }), /^16 steps on green .* 16 levels falling/);
	});
});

describe('importTrace rejects malformed traces with a clear message', () => {
	it('empty file', () => {
		rejects('', /empty file/);
		rejects('\n  \n\r\n', /empty file/);
	});
	it('no numeric columns', () => rejects(read('bad-text.csv'), /no numeric columns/));
	it('no step pattern (a black line)', () => rejects(read('bad-flat.csv'), /not 11 rising plateaus/));
	it('units unclear', () => rejects(read('bad-units.csv'), /units unclear for ch1/));
	it('non-monotonic steps do not make 11 rising plateaus', () => {
		const levels = [0, 70, 140, 210, 280, 250, 420, 490, 560, 630, 700];
		const mv = synthesize(levels, -300, 1, 9);
		rejects(mv.map((v, i) => `${(i * 32e-9).toExponential(5)},${v.toFixed(2)}`).join('\n'), /not 11 rising plateaus/);
	});
	it('only one numeric column, or too many', () => {
		rejects(Array.from({ length: 200 }, (_, i) => String(i)).join('\n'), /only one numeric column/);
		rejects(Array.from({ length: 200 }, (_, i) => `${i},1,2,3,4,5`).join('\n'), /6 numeric columns/);
	});
	it('first column not a time column', () => {
		rejects(Array.from({ length: 200 }, (_, i) => `${i % 7},${i}`).join('\n'), /not a time column/);
	});
	it('too few samples', () => rejects('0,0\n1,0.1\n2,0.2', /too few samples/));
	it('bad channel mapping option', () =>
		rejects(read('good-3ch.csv'), /options.channels/, { channels: ['r', 'r', 'b'] }));
});
