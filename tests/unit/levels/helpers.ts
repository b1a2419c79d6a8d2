import type { LevelInput, LevelStepInput } from '../../../src/lib/levels';

export const STEPS = [0, 10, 20, 30, 40, 50, 60, 70, 80, 90, 100];

/** A full 11-step input; `f` gives [r, g, b] in mV for an IRE step. */
export function ramp(
	f: (ire: number) => [number, number, number] = (i) => [7 * i, 7 * i, 7 * i],
	fullScaleMv?: number
): LevelInput {
	const steps: LevelStepInput[] = STEPS.map((ire) => {
		const [r, g, b] = f(ire);
		return { ire, r, g, b };
	});
	return fullScaleMv === undefined ? { steps } : { steps, fullScaleMv };
}

/** Perfect ramp except at one step, where the given readings apply. */
export function perfectExcept(at: number, rgb: [number, number, number]): LevelInput {
	return ramp((i) => (i === at ? rgb : [7 * i, 7 * i, 7 * i]));
}
