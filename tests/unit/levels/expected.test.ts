import { describe, expect, it } from 'vitest';
import { aggregateRuns, analyzeLevels, backtestExpected, expectedGrade, type ChipRun } from '../../../src/lib/levels';
import { ramp } from './helpers';

// Reports from real engine runs: a gain error moves the band (7 mV per IRE, common practice).
const report = (gain: number) => analyzeLevels(ramp((i) => [7 * i * gain, 7 * i * gain, 7 * i * gain]));

describe('expectedGrade', () => {
	const runs: ChipRun[] = [
		{ revisionId: 1, converterId: 10, report: report(1.0) },
		{ revisionId: 1, converterId: 10, report: report(1.015) },
		{ revisionId: 2, converterId: 20, report: report(1.015) },
		{ revisionId: 3, converterId: 30, report: report(1.03) },
		{ revisionId: 4, converterId: 40, report: report(1.0) }
	];

	it('is the engine aggregate of the chip runs elsewhere, with its basis', () => {
		const e = expectedGrade({ revisionId: 9, converterId: 90 }, runs)!;
		const agg = aggregateRuns(runs.map((r) => r.report as never));
		expect(e.band).toBe(agg.band);
		expect(e.runs).toBe(5);
		expect(e.converters).toBe(4);
		expect(e.basis).toBe('from 5 runs of this chip in 4 other converters; not yet measured');
	});

	it('leaves out the revision itself and names other revisions of the same converter', () => {
		const e = expectedGrade({ revisionId: 1, converterId: 20 }, runs)!;
		expect(e.runs).toBe(3);
		expect(e.basis).toBe(
			'from 3 runs of this chip in 2 other converters and 1 other revision of this converter; not yet measured'
		);
	});

	it('is null with nothing to go on, or with mixed rubric versions', () => {
		expect(expectedGrade({ revisionId: 1, converterId: 10 }, runs.slice(0, 2))).toBeNull();
		const mixed = [runs[2], { ...runs[3], report: { ...runs[3].report, rubricVersion: 'old' } }];
		expect(expectedGrade({ revisionId: 9, converterId: 9 }, mixed)).toBeNull();
		expect(expectedGrade({ revisionId: 9, converterId: 9 }, mixed, runs[2].report.rubricVersion)!.runs).toBe(1);
	});
});

describe('backtestExpected (leave one out)', () => {
	it('counts exact and within-one-band predictions', () => {
		const chipRuns = new Map<number, ChipRun[]>([
			[
				1,
				[
					{ revisionId: 1, converterId: 1, report: report(1.0) },
					{ revisionId: 2, converterId: 2, report: report(1.0) },
					{ revisionId: 3, converterId: 3, report: report(1.06) }
				]
			],
			[2, [{ revisionId: 4, converterId: 4, report: report(1.0) }]]
		]);
		const bands = new Map([...chipRuns.values()].flat().map((r) => [r.revisionId, r.report.band]));
		const res = backtestExpected(
			[1, 2, 3]
				.map((id) => ({ revisionId: id, converterId: id, chipId: 1, band: bands.get(id)! }))
				.concat([{ revisionId: 4, converterId: 4, chipId: 2, band: bands.get(4)! }]),
			chipRuns
		);
		expect(res.predicted).toBe(3);
		expect(res.skipped).toBe(1);
		for (const row of res.rows) {
			const others = chipRuns.get(1)!.filter((r) => r.revisionId !== row.revisionId);
			expect(row.expected).toBe(aggregateRuns(others.map((r) => r.report as never)).band);
		}
		expect(res.exactRate).toBe(res.exact / 3);
		expect(res.withinOne).toBeGreaterThanOrEqual(res.exact);
		expect(backtestExpected([], new Map()).exactRate).toBeNull();
	});
});
