/**
 * `npm run bench:levels`: speed and memory of the level engine, as ratios to a ceiling
 * measured in the same run (the machine is shared and noisy, so absolute times mean little).
 *
 * - analyse 10,000 bench runs (ceiling: split + parseFloat of the same readings as CSV text);
 * - import 100,000- and 1,000,000-sample three-channel scope exports with importTrace, in
 *   Node and in Chromium (playwright-core, /usr/bin/chromium), against a bare
 *   split-and-parseFloat of the same text; target: at most 4x;
 * - memory of the import in Node: the peak growth while importing, over the size of the
 *   numbers as float64 (samples x columns x 8 bytes); target: near 1 (typed arrays, no
 *   per-sample objects).
 *
 * Every figure is one line `bench:levels <what> key=value ...` for scripts to read.
 * Environment: BENCH_RUNS (default 10000), BENCH_SAMPLES (comma list, default 100000,1000000),
 * BENCH_REPEAT (default 3 rounds at 1,000,000 samples, more for smaller exports; ceiling and
 * import alternate and the best of each is kept), BENCH_BROWSER=0 to skip Chromium.
 */
import { build } from 'esbuild';
// @ts-expect-error plain ES module without types
import { ensureChromium } from './lib/bootstrap.mjs';
import { renderCsv } from '../fixtures/traces/generate';
import type { TraceSpec } from '../fixtures/traces/specs';
import { analyzeLevels, importTrace, type LevelInput } from '../src/lib/levels/index';

const RUNS = Number(process.env.BENCH_RUNS ?? 10000);
const SAMPLES = (process.env.BENCH_SAMPLES ?? '100000,1000000').split(',').map(Number);
const REPEAT = Number(process.env.BENCH_REPEAT ?? 3);
const BROWSER = process.env.BENCH_BROWSER !== '0';
const TARGET_RATIO = 4;

const gc = (globalThis as { gc?: () => void }).gc ?? (() => {});
const line = (what: string, fields: Record<string, string | number>) =>
	console.log(
		`bench:levels ${what} ${Object.entries(fields)
			.map(([k, v]) => `${k}=${v}`)
			.join(' ')}`
	);
const fixed = (x: number, d = 2) => x.toFixed(d);

/** The ceiling: split the text into lines and fields and parseFloat every field. */
function bareParse(text: string): number {
	let sum = 0;
	const lines = text.split('\n');
	for (let i = 0; i < lines.length; i++) {
		const f = lines[i].split(',');
		for (let j = 0; j < f.length; j++) {
			const v = parseFloat(f[j]);
			if (v === v) sum += v;
		}
	}
	return sum;
}

function best(fn: () => unknown): number {
	let min = Infinity;
	for (let k = 0; k < REPEAT; k++) {
		const t0 = performance.now();
		fn();
		min = Math.min(min, performance.now() - t0);
	}
	return min;
}

function exportSpec(samples: number): TraceSpec {
	const ramp = (f: (ire: number) => number) => Array.from({ length: 11 }, (_, k) => f(k * 10));
	return {
		file: `bench-${samples}.csv`,
		note: 'benchmark export',
		channels: [
			{ name: 'r', levels: ramp((i) => 7 * i + 1) },
			{ name: 'g', levels: ramp((i) => 7 * i) },
			{ name: 'b', levels: ramp((i) => 7.1 * i) }
		],
		unit: 'V',
		header: true,
		sep: ',',
		t0: -12e-6,
		noiseMv: 1.2,
		syncMv: -300,
		seed: 11,
		samples
	};
}

// ---------------------------------------------------------------- analyse runs

function seededRuns(n: number): LevelInput[] {
	let a = 12345;
	const rnd = () => ((a = (a * 1103515245 + 12345) >>> 0) / 4294967296) * 2 - 1;
	return Array.from({ length: n }, () => ({
		steps: Array.from({ length: 11 }, (_, k) => {
			const e = 70 * k;
			return {
				ire: 10 * k,
				r: Math.max(0, e + rnd() * 20),
				g: Math.max(0, e + rnd() * 20),
				b: Math.max(0, e + rnd() * 20)
			};
		})
	}));
}

function benchAnalyse() {
	const runs = seededRuns(RUNS);
	const csv = runs.map((r) => r.steps.map((s) => `${s.ire},${s.r},${s.g},${s.b}`).join('\n')).join('\n');
	analyzeLevels(runs[0]); // warm up
	const ms = best(() => {
		for (const r of runs) analyzeLevels(r);
	});
	const ceiling = best(() => bareParse(csv));
	line('analyse', {
		runs: RUNS,
		ms: fixed(ms, 1),
		us_per_run: fixed((ms * 1000) / RUNS, 1),
		ceiling_ms: fixed(ceiling, 1),
		ratio: fixed(ms / ceiling)
	});
}

// ---------------------------------------------------------------- import in Node

/**
 * Best (minimum) time of each of two jobs, run alternately after a warm-up, so a change in
 * the machine's load hits both alike. Smaller inputs get more rounds.
 */
function bestPair(a: () => unknown, b: () => unknown, rounds: number): [number, number] {
	for (let k = 0; k < 2; k++) {
		a();
		b();
	}
	let minA = Infinity;
	let minB = Infinity;
	// No forced gc() between runs: a full collection right before a run slows the next
	// allocations and would time V8's heap regrowth rather than the code.
	for (let k = 0; k < rounds; k++) {
		let t0 = performance.now();
		a();
		minA = Math.min(minA, performance.now() - t0);
		t0 = performance.now();
		b();
		minB = Math.min(minB, performance.now() - t0);
	}
	return [minA, minB];
}

const roundsFor = (samples: number) => Math.max(REPEAT, Math.round((REPEAT * 1e6) / samples / 3));

async function benchImportNode(samples: number, text: string) {
	// Memory in a settled heap: peak growth of the JS heap plus array buffers while
	// importing, sampled at every progress call. Array buffers are released a moment after
	// the collection that finds them dead, hence the pauses.
	const settle = async () => {
		for (let k = 0; k < 3; k++) {
			gc();
			await new Promise((r) => setTimeout(r, 50));
		}
	};
	const used = () => {
		const m = process.memoryUsage();
		return m.heapUsed + m.arrayBuffers;
	};
	const [ceiling, ms] = bestPair(
		() => bareParse(text),
		() => importTrace(text, { includeSamples: false }),
		roundsFor(samples)
	);
	// (after the timed runs, so the code is optimised and allocates what it keeps, not temporaries)
	await settle();
	const base = used();
	let peak = 0;
	importTrace(text, { includeSamples: false, onProgress: () => (peak = Math.max(peak, used() - base)) });
	const numbersBytes = samples * 4 * 8;
	line('import', {
		env: 'node',
		samples,
		text_mb: fixed(text.length / 1e6, 1),
		ms: fixed(ms, 1),
		ceiling_ms: fixed(ceiling, 1),
		ratio: fixed(ms / ceiling),
		target: `<=${TARGET_RATIO}`,
		ok: ms / ceiling <= TARGET_RATIO ? 'yes' : 'no'
	});
	line('memory', {
		env: 'node',
		samples,
		peak_mb: fixed(peak / 1e6, 1),
		numbers_mb: fixed(numbersBytes / 1e6, 1),
		ratio: fixed(peak / numbersBytes)
	});
}

// ---------------------------------------------------------------- import in Chromium

/** Runs in Chromium: the same ceiling and import, timed with performance.now(). */
const IN_PAGE = `async (samples, repeat) => {
	const text = await (await fetch('/' + samples)).text();
	const bare = (t) => {
		let sum = 0;
		const lines = t.split('\\n');
		for (let i = 0; i < lines.length; i++) {
			const f = lines[i].split(',');
			for (let j = 0; j < f.length; j++) {
				const v = parseFloat(f[j]);
				if (v === v) sum += v;
			}
		}
		return sum;
	};
	const run = () => levels.importTrace(text, { includeSamples: false });
	for (let k = 0; k < 2; k++) {
		bare(text);
		run();
	}
	let ceiling = Infinity;
	let ms = Infinity;
	for (let k = 0; k < repeat; k++) {
		let t0 = performance.now();
		bare(text);
		ceiling = Math.min(ceiling, performance.now() - t0);
		t0 = performance.now();
		run();
		ms = Math.min(ms, performance.now() - t0);
	}
	return { ms, ceiling };
}`;

async function benchImportBrowser(texts: Map<number, string>) {
	const bundle = await build({
		entryPoints: ['src/lib/levels/index.ts'],
		bundle: true,
		format: 'iife',
		globalName: 'levels',
		platform: 'browser',
		write: false,
		minify: true
	});
	const code = bundle.outputFiles[0].text;
	ensureChromium();
	const { chromium } = await import('playwright-core');
	const browser = await chromium.launch({
		executablePath: '/usr/bin/chromium',
		args: ['--headless', '--no-sandbox', '--disable-gpu', '--js-flags=--expose-gc']
	});
	try {
		const page = await browser.newPage();
		await page.route('http://bench.invalid/**', (route) => {
			const url = new URL(route.request().url());
			if (url.pathname === '/')
				return route.fulfill({ contentType: 'text/html', body: `<!doctype html><script>${code}</script>` });
			const n = Number(url.pathname.slice(1));
			return route.fulfill({ contentType: 'text/csv', body: texts.get(n) ?? '' });
		});
		await page.goto('http://bench.invalid/');
		for (const [samples] of texts) {
			// Plain JavaScript text: functions passed to evaluate() would carry tsx's helpers.
			const r = (await page.evaluate(`(${IN_PAGE})(${samples}, ${roundsFor(samples)})`)) as {
				ms: number;
				ceiling: number;
			};
			line('import', {
				env: 'chromium',
				samples,
				ms: fixed(r.ms, 1),
				ceiling_ms: fixed(r.ceiling, 1),
				ratio: fixed(r.ms / r.ceiling),
				target: `<=${TARGET_RATIO}`,
				ok: r.ms / r.ceiling <= TARGET_RATIO ? 'yes' : 'no'
			});
		}
	} finally {
		await browser.close();
	}
}

benchAnalyse();
const texts = new Map<number, string>();
for (const n of SAMPLES) {
	const text = renderCsv(exportSpec(n));
	texts.set(n, text);
	await benchImportNode(n, text);
}
if (BROWSER) await benchImportBrowser(texts);
