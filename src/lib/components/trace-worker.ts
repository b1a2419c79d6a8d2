/**
 * Web Worker: reads scope traces with the level engine's importTrace off the main thread,
 * reporting progress, so a large export never freezes the curator's page. Loaded by
 * BenchRunForm through Vite's `?worker` import. Posts { type: 'progress', fraction },
 * then { type: 'done', steps, warnings } or { type: 'error', message }.
 */
import { importTrace, LevelInputError, type Channel } from '$lib/levels';

export interface TraceJob {
	files: Array<{ name: string; text: string; channel: Channel | null }>;
}

export type TraceWorkerMessage =
	| { type: 'progress'; fraction: number }
	| { type: 'done'; steps: Array<{ ire: number; r?: number; g?: number; b?: number }>; warnings: string[] }
	| { type: 'error'; message: string };

const post = (m: TraceWorkerMessage) => (self as unknown as Worker).postMessage(m);

self.onmessage = (e: MessageEvent<TraceJob>) => {
	const { files } = e.data;
	const steps: Array<{ ire: number; r?: number; g?: number; b?: number }> = [];
	const warnings = new Set<string>();
	for (let i = 0; i < files.length; i++) {
		const f = files[i];
		try {
			const t = importTrace(f.text, {
				channels: f.channel ? [f.channel] : undefined,
				includeSamples: false,
				onProgress: (x) => post({ type: 'progress', fraction: (i + x) / files.length })
			});
			t.steps.forEach((s, k) => (steps[k] = { ...steps[k], ...s }));
			for (const w of t.warnings) warnings.add(w);
		} catch (err) {
			post({
				type: 'error',
				message:
					err instanceof LevelInputError
						? `${files.length > 1 ? `${f.name}: ` : ''}${err.message}`
						: `${f.name} could not be read.`
			});
			return;
		}
	}
	post({ type: 'done', steps, warnings: [...warnings] });
};
