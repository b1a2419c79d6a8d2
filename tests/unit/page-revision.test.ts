/**
 * What the converter page sends of a revision (pageRevision, src/lib/server/queries/public.ts):
 * the graded run in full, every run as its line with a band mark equal to the one its full report
 * gives (reportMark), and no other run's readings. Level figures come from analyzeLevels on ramps
 * at the common-practice 7 mV per IRE (tests/unit/levels/helpers.ts).
 */
import { describe, expect, it } from 'vitest';
import { analyzeLevels } from '../../src/lib/levels';
import { reportMark } from '../../src/lib/components/bands';
import { pageRevision, type PublicBenchRun, type PublicRevision } from '../../src/lib/server/queries/public';
import { perfectExcept, ramp } from './levels/helpers';

function run(id: number, input: ReturnType<typeof ramp>): PublicBenchRun {
	const report = analyzeLevels(input);
	return {
		id,
		measuredBy: `Tester ${id}`,
		measuredOn: '2026-01-15',
		testSource: 'Pattern generator',
		pattern: '11-step grey ramp',
		instrument: 'Oscilloscope',
		termination: '75-ohm',
		fullScaleMv: 700,
		band: report.band,
		score: report.score,
		input,
		report
	};
}

describe('pageRevision', () => {
	const runs = [
		run(1, ramp()),
		run(2, perfectExcept(100, [640, 640, 640])),
		run(
			3,
			ramp((i) => [7 * i * 0.9, 7 * i, 7 * i])
		)
	];
	const revision = { id: 9, code: 'A', runsDetail: runs, medianRun: 1 } as unknown as PublicRevision;
	const page = pageRevision(revision);

	it('keeps the graded run whole', () => {
		expect(page.median).toBe(runs[1]);
	});
	it('gives every run its line and the band mark its full report gives, without readings or report', () => {
		expect(page.runLines.map((r) => r.id)).toEqual([1, 2, 3]);
		for (const [i, line] of page.runLines.entries()) {
			expect(reportMark(line.mark)).toEqual(reportMark(runs[i].report));
			expect(line).not.toHaveProperty('input');
			expect(line).not.toHaveProperty('report');
			expect(line.measuredBy).toBe(runs[i].measuredBy);
		}
		expect(new Set(runs.map((r) => r.report.band)).size, 'the runs differ in band').toBeGreaterThan(1);
	});
	it('has no median run when the revision has none', () => {
		expect(pageRevision({ ...revision, medianRun: null }).median).toBeNull();
	});
});
