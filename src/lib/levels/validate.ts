/**
 * Boundary checks for level readings (zod for shape, then domain rules).
 * Every failure becomes a LevelInputError whose message names the step and
 * channel, so a curator typing readings sees exactly what to fix.
 */
import { z } from 'zod';
import { LevelInputError } from './errors';
import { RUBRIC } from './rubric';

export const CHANNELS = ['r', 'g', 'b'] as const;
export type Channel = (typeof CHANNELS)[number];
export const CHANNEL_NAMES: Record<Channel, string> = { r: 'red', g: 'green', b: 'blue' };

/** The 11 steps of the grey pattern. */
export const ALL_STEPS_IRE = [0, 10, 20, 30, 40, 50, 60, 70, 80, 90, 100] as const;
/** Steps without which no grade is given. */
export const REQUIRED_STEPS_IRE = [0, 10, 50, 100] as const;
/** Readings above this are not a video level at all (an unterminated 700 mV line reads ~1400). */
export const MAX_READING_MV = 2000;
/**
 * Readings a little below 0 mV at black are measurement noise, not an error:
 * up to RUBRIC.readings.belowBlankingToleranceIre below blanking is accepted
 * (this is that limit at the default 700 mV full scale: -7 mV).
 */
export const MIN_READING_MV = -RUBRIC.readings.belowBlankingToleranceIre * 7;
/** Below this no reading is a video level at all (the boundary's coarse check). */
const FLOOR_MV = -MAX_READING_MV;
export const FULL_SCALE_RANGE_MV = { min: 100, max: 1500 } as const;
export const DEFAULT_FULL_SCALE_MV = 700;

const reading = (name: string) =>
	z
		.number({ error: `${name} reading must be a finite number of millivolts` })
		.min(FLOOR_MV, { error: `${name} reading is far below blanking; readings are mV above blanking (0 mV)` })
		.max(MAX_READING_MV, {
			error: `${name} reading is above ${MAX_READING_MV} mV, not a plausible video level (check V vs mV)`
		});

const stepSchema = z.object({
	ire: z.number({ error: 'ire must be a finite number' }),
	r: reading('red'),
	g: reading('green'),
	b: reading('blue')
});

export const levelInputSchema = z.object({
	steps: z.array(stepSchema, { error: 'steps must be a list of readings' }),
	fullScaleMv: z
		.number({ error: 'fullScaleMv must be a finite number of millivolts' })
		.min(FULL_SCALE_RANGE_MV.min, { error: `fullScaleMv must be at least ${FULL_SCALE_RANGE_MV.min} mV` })
		.max(FULL_SCALE_RANGE_MV.max, { error: `fullScaleMv must be at most ${FULL_SCALE_RANGE_MV.max} mV` })
		.optional()
});

export interface LevelStepInput {
	ire: number;
	r: number;
	g: number;
	b: number;
}

export interface LevelInput {
	steps: LevelStepInput[];
	/** Reference full scale in mV (default 700, the analog RGB video swing). */
	fullScaleMv?: number;
}

export interface ValidInput {
	steps: LevelStepInput[]; // sorted by ire
	fullScaleMv: number;
	missingSteps: number[];
}

function pathText(path: PropertyKey[]): string {
	let s = '';
	for (const p of path) s += typeof p === 'number' ? `[${p}]` : s ? `.${String(p)}` : String(p);
	return s;
}

/** Validate and normalise level input; throws LevelInputError with every problem found. */
export function validateLevelInput(input: unknown): ValidInput {
	if (input == null || typeof input !== 'object')
		throw new LevelInputError('input is empty: expected { steps: [...] }');
	const parsed = levelInputSchema.safeParse(input);
	if (!parsed.success) {
		const issues = parsed.error.issues.map((i) => {
			const p = pathText(i.path);
			const where = p.replace(/^steps\[(\d+)\]/, (_m, n) => {
				const raw = (input as { steps?: Array<{ ire?: unknown }> }).steps?.[Number(n)]?.ire;
				return typeof raw === 'number' && Number.isFinite(raw) ? `step ${raw} IRE` : `steps[${n}]`;
			});
			return `${where}: ${i.message}`;
		});
		throw new LevelInputError(`invalid level readings: ${issues.join('; ')}`, issues);
	}
	const { steps } = parsed.data;
	const fullScaleMv = parsed.data.fullScaleMv ?? DEFAULT_FULL_SCALE_MV;
	if (steps.length === 0)
		throw new LevelInputError('no readings: steps is empty (need at least 0, 10, 50 and 100 IRE)');

	if (readingsLookLikeVolts(steps)) {
		const white = steps.find((s) => s.ire === 100);
		const w = white ? median3(white.r, white.g, white.b) : Math.max(...steps.map((s) => Math.max(s.r, s.g, s.b)));
		const v = Math.round(w * 1000) / 1000;
		throw new LevelInputError(
			`the readings look like volts (white reads ${v}): enter millivolts, e.g. ${Math.round(v * 1000)} for ${v} V`
		);
	}

	const issues: string[] = [];
	const seen = new Set<number>();
	for (const s of steps) {
		if (s.ire < 0 || s.ire > 100 || !Number.isInteger(s.ire) || s.ire % 10 !== 0) {
			issues.push(`unknown step ${s.ire} IRE: steps must be multiples of 10 from 0 to 100`);
			continue;
		}
		if (seen.has(s.ire)) issues.push(`duplicate step ${s.ire} IRE: give one reading per step`);
		seen.add(s.ire);
	}
	// A few mV below blanking is scope noise at black; further below is a probe or offset mistake.
	const floorMv = -RUBRIC.readings.belowBlankingToleranceIre * (fullScaleMv / 100);
	for (const s of steps) {
		for (const c of CHANNELS) {
			if (s[c] < floorMv)
				issues.push(
					`step ${s.ire} IRE: ${CHANNEL_NAMES[c]} reads ${s[c]} mV, more than ${fmtMv(-floorMv)} mV (${RUBRIC.readings.belowBlankingToleranceIre} IRE) below blanking; readings are mV above blanking (0 mV): check the probe's ground and the scope's offset`
				);
		}
	}
	if (issues.length) throw new LevelInputError(`invalid level readings: ${issues.join('; ')}`, issues);
	const absent = REQUIRED_STEPS_IRE.filter((x) => !seen.has(x));
	if (absent.length)
		throw new LevelInputError(
			`too few steps: ${absent.map((x) => `${x} IRE`).join(', ')} missing; 0, 10, 50 and 100 IRE are required`
		);
	const sorted = [...steps].sort((a, b) => a.ire - b.ire).map((s) => ({ ire: s.ire, r: s.r, g: s.g, b: s.b }));
	const missingSteps = ALL_STEPS_IRE.filter((x) => !seen.has(x));
	return { steps: sorted, fullScaleMv, missingSteps };
}

const median3 = (a: number, b: number, c: number) => Math.max(Math.min(a, b), Math.min(Math.max(a, b), c));
const fmtMv = (x: number) => String(Math.round(x * 10) / 10);

/**
 * True when readings look typed in volts rather than millivolts: every value
 * at most RUBRIC.readings.voltsLike.maxValue and white (the median channel at
 * 100 IRE, or the largest reading when 100 IRE is absent) at least whiteMin.
 * A dead output (all near 0) is not mistaken for volts. Forms use this to
 * offer the x1000 conversion.
 */
export function readingsLookLikeVolts(steps: ReadonlyArray<{ ire: number; r: number; g: number; b: number }>): boolean {
	const v = RUBRIC.readings.voltsLike;
	if (steps.length === 0) return false;
	let max = -Infinity;
	for (const s of steps) max = Math.max(max, s.r, s.g, s.b);
	if (!(max <= v.maxValue)) return false;
	const white = steps.find((s) => s.ire === 100);
	const w = white ? median3(white.r, white.g, white.b) : max;
	return w >= v.whiteMin;
}
