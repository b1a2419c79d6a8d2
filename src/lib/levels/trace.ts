/**
 * Scope trace import: a CSV export of one video line of the 11-step grey
 * pattern (0..100 IRE) -> one robust level per step per channel.
 *
 * Why it works the way it does: real exports differ in separator, decimal
 * mark, units and header; the line carries sync and blanking before the
 * steps; every edge rings. So the importer smooths with a running median,
 * keeps only the flat stretches, merges stretches at one level, picks the
 * longest rising run of levels, uses the typical step duration to split a
 * stretch that holds several equal steps (clipped highlights, crushed
 * blacks, or blanking running into the 0 IRE step), and takes the last 11
 * steps of the run. Levels and noise come from the median and MAD of the
 * central part of each plateau, clear of the edges.
 */
import { LevelInputError } from './errors';
import { ALL_STEPS_IRE, CHANNELS, CHANNEL_NAMES, type Channel, type LevelInput } from './validate';

export type VoltageUnit = 'V' | 'mV';

export interface ImportTraceOptions {
	/** Force the voltage unit instead of reading it from the header or the magnitudes. */
	units?: VoltageUnit;
	/** Which channel each voltage column carries, in column order. */
	channels?: Channel[];
	/** Keep a (decimated) copy of the samples for drawing; default true. */
	includeSamples?: boolean;
}

export interface TracePlateau {
	ire: number;
	/** Start and end of the stretch the level was taken from, in the file's time unit. */
	start: number;
	end: number;
	levelMv: number;
	/** Robust standard deviation (1.4826 x MAD) of the samples used. */
	noiseMv: number;
}

export interface TraceChannel {
	channel: Channel;
	column: string;
	unit: VoltageUnit;
	unitFrom: 'header' | 'magnitude' | 'option';
}

export interface TraceImport {
	steps: Array<{ ire: number; r?: number; g?: number; b?: number }>;
	/** Typical noise (median of the plateau noise figures), mV. */
	noiseMv: number;
	warnings: string[];
	plateaus: Partial<Record<Channel, TracePlateau[]>>;
	channels: TraceChannel[];
	samples?: { time: number[]; mv: Partial<Record<Channel, number[]>> };
}

const MAX_SAMPLES_KEPT = 4000;
const NUM_RE = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

function median(xs: number[]): number {
	if (xs.length === 0) return NaN;
	const a = [...xs].sort((p, q) => p - q);
	const m = a.length >> 1;
	return a.length % 2 ? a[m] : (a[m - 1] + a[m]) / 2;
}

/** Robust sigma: 1.4826 x median absolute deviation. */
function robustSigma(xs: number[]): number {
	const m = median(xs);
	return 1.4826 * median(xs.map((x) => Math.abs(x - m)));
}

function quantile(xs: number[], q: number): number {
	const a = [...xs].sort((p, r) => p - r);
	const i = Math.min(a.length - 1, Math.max(0, Math.round(q * (a.length - 1))));
	return a[i];
}

function runningMedian(xs: number[], w: number): number[] {
	const h = (w - 1) >> 1;
	const out = new Array<number>(xs.length);
	for (let i = 0; i < xs.length; i++) out[i] = median(xs.slice(Math.max(0, i - h), Math.min(xs.length, i + h + 1)));
	return out;
}

function detectSeparator(lines: string[]): { sep: string | RegExp; decimalComma: boolean } {
	const sample = lines.slice(0, 50);
	const count = (ch: string) => sample.filter((l) => l.includes(ch)).length;
	if (count(';') >= sample.length / 2) return { sep: ';', decimalComma: true };
	if (count('\t') >= sample.length / 2) return { sep: '\t', decimalComma: false };
	if (count(',') >= sample.length / 2) return { sep: ',', decimalComma: false };
	return { sep: /\s+/, decimalComma: false };
}

function unitFromHeader(text: string | undefined): VoltageUnit | null {
	if (!text) return null;
	const t = text.toLowerCase();
	if (/(^|[^a-z])(mv|millivolts?)([^a-z]|$)/.test(t)) return 'mV';
	if (/(^|[^a-z])(v|volts?)([^a-z]|$)/.test(t)) return 'V';
	return null;
}

function channelFromHeader(text: string | undefined): Channel | null {
	if (!text) return null;
	const tokens = text.toLowerCase().split(/[^a-z]+/).filter(Boolean);
	if (tokens.includes('red') || tokens.includes('r')) return 'r';
	if (tokens.includes('green') || tokens.includes('g')) return 'g';
	if (tokens.includes('blue') || tokens.includes('b')) return 'b';
	return null;
}

const UNIT_ROW_RE = /^[([]?(s|ms|us|µs|ns|sec|seconds?|v|mv|volts?)[)\]]?$/i;

interface Piece {
	start: number; // sample index
	end: number; // exclusive
}

interface Run extends Piece {
	level: number;
}

function centralSlice(values: number[], p: Piece): number[] {
	const len = p.end - p.start;
	const trim = Math.floor(len * 0.2);
	return values.slice(p.start + trim, p.end - trim);
}

/** Find the 11 step plateaus of one channel (values in mV). */
function findSteps(time: number[], mv: number[], name: string): { plateaus: TracePlateau[]; split: boolean } {
	const n = mv.length;
	const diffs: number[] = [];
	for (let i = 1; i < n; i++) diffs.push(mv[i] - mv[i - 1]);
	// First differences are noise almost everywhere (edges are few): a robust
	// sigma of them, over sqrt(2), is the sample noise.
	const sigma = robustSigma(diffs) / Math.SQRT2;
	// Window grows with the sample rate but is capped: past ~21 samples a
	// wider median only costs time.
	const w = Math.min(21, Math.max(5, (Math.round(n / 300) >> 1) * 2 + 1));
	const h = (w - 1) >> 1;
	const s = runningMedian(mv, w);
	const flatThr = Math.max(4 * sigma, 1.5);
	const mergeThr = Math.max(6 * sigma, 3);
	const minLen = Math.max(2 * w, Math.round(n / 150));

	const flat: boolean[] = new Array(n).fill(false);
	for (let i = h; i < n - h; i++) {
		let lo = Infinity;
		let hi = -Infinity;
		for (let j = i - h; j <= i + h; j++) {
			if (s[j] < lo) lo = s[j];
			if (s[j] > hi) hi = s[j];
		}
		flat[i] = hi - lo <= flatThr;
	}
	const runs: Run[] = [];
	for (let i = 0; i < n; ) {
		if (!flat[i]) {
			i++;
			continue;
		}
		let j = i;
		while (j < n && flat[j]) j++;
		if (j - i >= minLen) runs.push({ start: i, end: j, level: median(centralSlice(mv, { start: i, end: j })) });
		i = j;
	}
	// Merge neighbours at one level (a noise burst or a ripple can cut a plateau).
	const merged: Run[] = [];
	for (const r of runs) {
		const last = merged[merged.length - 1];
		if (last && Math.abs(last.level - r.level) < mergeThr) {
			last.end = r.end;
			last.level = median(centralSlice(mv, last));
		} else merged.push({ ...r });
	}
	// Longest chain of consecutive rising plateaus.
	let bestStart = 0;
	let bestLen = merged.length ? 1 : 0;
	for (let i = 0; i < merged.length; ) {
		let j = i + 1;
		while (j < merged.length && merged[j].level > merged[j - 1].level) j++;
		if (j - i > bestLen) {
			bestLen = j - i;
			bestStart = i;
		}
		i = j;
	}
	const chain = merged.slice(bestStart, bestStart + bestLen);
	const fail = (found: number) =>
		new LevelInputError(
			`not 11 rising plateaus on ${name}: found ${found} step levels rising one after another, expected 11 (the 0 to 100 IRE grey steps). Check that the capture shows one whole line of the step pattern.`
		);
	if (chain.length < 3) throw fail(chain.length);
	// Typical step duration from the inner plateaus (the first may hold blanking too).
	const inner = chain.length > 3 ? chain.slice(1, -1) : chain.slice(1);
	const dur = median(inner.map((r) => r.end - r.start));
	const pitch = median(chain.slice(1).map((r, k) => r.start - chain[k].start).slice(1)) || dur;
	const gap = Math.max(0, pitch - dur);
	const pieces: Array<Piece & { run: number }> = [];
	chain.forEach((r, k) => {
		const count = Math.max(1, Math.round((r.end - r.start + gap) / pitch));
		const len = (r.end - r.start - (count - 1) * gap) / count;
		for (let p = 0; p < count; p++) {
			const start = Math.round(r.start + p * (len + gap));
			pieces.push({ start, end: Math.round(start + len), run: k });
		}
	});
	if (pieces.length < 11) throw fail(pieces.length);
	const chosen = pieces.slice(-11);
	const firstRun = chosen[0].run;
	const split = chosen.some((p, i) => p.run !== firstRun && i > 0 && chosen[i - 1].run === p.run);
	const plateaus = chosen.map((p, i) => {
		const vals = centralSlice(mv, p);
		return {
			ire: ALL_STEPS_IRE[i],
			start: time[p.start],
			end: time[Math.min(n - 1, p.end - 1)],
			levelMv: median(vals),
			noiseMv: robustSigma(vals)
		};
	});
	const rise = plateaus[10].levelMv - plateaus[0].levelMv;
	if (rise < 10 * mergeThr) throw fail(0);
	return { plateaus, split };
}

/**
 * Read a scope CSV export of one video line of the 0..100 IRE 11-step grey
 * pattern and return the level of each step per channel, with noise,
 * plateau positions (for drawing) and warnings. Throws LevelInputError with
 * a plain message when the file is empty, has no numeric columns, has
 * unclear units, or does not show 11 rising plateaus.
 */
export function importTrace(csvText: string, options: ImportTraceOptions = {}): TraceImport {
	if (typeof csvText !== 'string') throw new LevelInputError('empty file: expected CSV text');
	const lines = csvText
		.replace(/^\uFEFF/, '')
		.split(/\r\n|\n|\r/)
		.map((l) => l.trim())
		.filter((l) => l.length > 0);
	if (lines.length === 0) throw new LevelInputError('empty file: the trace has no lines');
	const warnings: string[] = [];
	const { sep, decimalComma } = detectSeparator(lines);
	const split = (l: string) => {
		const f = l.split(sep).map((x) => x.trim().replace(/^"(.*)"$/, '$1'));
		if (f.length > 1 && f[f.length - 1] === '') f.pop();
		return f;
	};
	const parseNum = (f: string): number | null => {
		const t = decimalComma ? f.replace(',', '.') : f;
		return NUM_RE.test(t) ? Number(t) : null;
	};

	const rows: Array<{ line: number; fields: string[]; nums: number[] | null }> = lines.map((l, line) => {
		const fields = split(l);
		const nums = fields.map(parseNum);
		return { line, fields, nums: nums.every((x) => x !== null) ? (nums as number[]) : null };
	});
	const numeric = rows.filter((r) => r.nums);
	if (numeric.length === 0)
		throw new LevelInputError('no numeric columns: expected a time column and one to three voltage columns of numbers');
	const widthCounts = new Map<number, number>();
	for (const r of numeric) widthCounts.set(r.nums!.length, (widthCounts.get(r.nums!.length) ?? 0) + 1);
	const cols = [...widthCounts.entries()].sort((a, b) => b[1] - a[1])[0][0];
	if (cols < 2)
		throw new LevelInputError('only one numeric column: expected a time column followed by one to three voltage columns');
	if (cols > 4)
		throw new LevelInputError(`${cols} numeric columns: expected a time column followed by one to three voltage columns`);
	const data = numeric.filter((r) => r.nums!.length === cols);
	const firstDataLine = data[0].line;

	// Header (and an optional units row) just above the data.
	let header: string[] | undefined;
	let unitsRow: string[] | undefined;
	for (let i = firstDataLine - 1; i >= 0 && i >= firstDataLine - 2; i--) {
		const f = rows[i].fields;
		if (f.length !== cols) break;
		if (!unitsRow && !header && f.every((x) => UNIT_ROW_RE.test(x))) {
			unitsRow = f;
			continue;
		}
		header = f;
		break;
	}
	if (!header) warnings.push('no-header');

	const time = data.map((r) => r.nums![0]);
	if (data.length < 110)
		throw new LevelInputError(`too few samples (${data.length}) to find 11 steps; export the whole line at full resolution`);
	for (let i = 1; i < time.length; i++) {
		if (time[i] < time[i - 1])
			throw new LevelInputError('the first column does not rise steadily, so it is not a time column; put time first');
	}
	if (time[time.length - 1] <= time[0]) throw new LevelInputError('the time column does not advance');

	// Channel mapping.
	const nv = cols - 1;
	let mapping: Channel[];
	if (options.channels) {
		if (options.channels.length !== nv || new Set(options.channels).size !== nv)
			throw new LevelInputError(`options.channels must name ${nv} different channels, one per voltage column`);
		mapping = options.channels;
	} else {
		const named = Array.from({ length: nv }, (_, j) => channelFromHeader(header?.[j + 1]));
		if (named.every((c) => c) && new Set(named).size === nv) mapping = named as Channel[];
		else {
			mapping = nv === 1 ? ['g'] : nv === 2 ? ['r', 'g'] : ['r', 'g', 'b'];
			warnings.push(nv === 3 ? 'channel-order-assumed' : 'channels-assumed');
		}
	}

	const channels: TraceChannel[] = [];
	const mvByChannel: Partial<Record<Channel, number[]>> = {};
	for (let j = 0; j < nv; j++) {
		const raw = data.map((r) => r.nums![j + 1]);
		const column = header?.[j + 1] ?? `column ${j + 2}`;
		let unit: VoltageUnit;
		let unitFrom: TraceChannel['unitFrom'];
		const fromHeader = unitFromHeader(header?.[j + 1]) ?? unitFromHeader(unitsRow?.[j + 1]);
		if (options.units) {
			unit = options.units;
			unitFrom = 'option';
		} else if (fromHeader) {
			unit = fromHeader;
			unitFrom = 'header';
		} else {
			// A video line spans well under 3 V (sync to an unterminated white)
			// and, in mV, at least tens of mV: anything between is ambiguous.
			const span = quantile(raw, 0.995) - quantile(raw, 0.005);
			if (span <= 3) unit = 'V';
			else if (span >= 30) unit = 'mV';
			else
				throw new LevelInputError(
					`units unclear for ${column}: the values span ${span.toPrecision(3)}, which is neither clearly volts nor millivolts; put (V) or (mV) in the header`
				);
			unitFrom = 'magnitude';
			if (!warnings.includes('units-from-magnitude')) warnings.push('units-from-magnitude');
		}
		const ch = mapping[j];
		channels.push({ channel: ch, column, unit, unitFrom });
		mvByChannel[ch] = unit === 'V' ? raw.map((v) => v * 1000) : raw;
	}

	const plateaus: Partial<Record<Channel, TracePlateau[]>> = {};
	for (const c of channels) {
		const res = findSteps(time, mvByChannel[c.channel]!, `${CHANNEL_NAMES[c.channel]} (${c.column})`);
		plateaus[c.channel] = res.plateaus;
		if (res.split && !warnings.includes('equal-steps-split')) warnings.push('equal-steps-split');
	}
	// The channels come from one pattern: their steps should line up in time.
	const present = channels.map((c) => plateaus[c.channel]!);
	if (present.length > 1) {
		const pitch = (present[0][10].start - present[0][1].start) / 9;
		const off = present.some((p) => p.some((q, i) => Math.abs(q.start - present[0][i].start) > pitch / 2 && i > 0));
		if (off) warnings.push('channels-misaligned');
	}
	const noiseMv = median(present.flat().map((p) => p.noiseMv));
	if (noiseMv > 5) warnings.push('noisy');

	const round1 = (x: number) => Math.round(x * 10) / 10;
	const steps = ALL_STEPS_IRE.map((ire, i) => {
		const s: { ire: number; r?: number; g?: number; b?: number } = { ire };
		for (const c of channels) s[c.channel] = round1(plateaus[c.channel]![i].levelMv);
		return s;
	});

	const result: TraceImport = { steps, noiseMv: Math.round(noiseMv * 100) / 100, warnings, plateaus, channels };
	if (options.includeSamples !== false) {
		const stride = Math.ceil(time.length / MAX_SAMPLES_KEPT);
		const pick = <T>(xs: T[]) => xs.filter((_, i) => i % stride === 0);
		result.samples = {
			time: pick(time),
			mv: Object.fromEntries(channels.map((c) => [c.channel, pick(mvByChannel[c.channel]!)]))
		};
	}
	return result;
}

/**
 * Turn an imported trace into analysis input. All three channels must be
 * present unless `copyMissing` is set, which fills absent channels with a
 * copy of a measured one (say so wherever the result is shown).
 */
export function traceToLevelInput(trace: TraceImport, options: { copyMissing?: boolean; fullScaleMv?: number } = {}): LevelInput {
	const have = CHANNELS.filter((c) => trace.plateaus[c]);
	const missing = CHANNELS.filter((c) => !trace.plateaus[c]);
	if (missing.length && !options.copyMissing)
		throw new LevelInputError(
			`the trace has ${have.map((c) => CHANNEL_NAMES[c]).join(', ')} only; measure ${missing.map((c) => CHANNEL_NAMES[c]).join(' and ')} too`
		);
	const src = have[0];
	return {
		fullScaleMv: options.fullScaleMv,
		steps: trace.steps.map((s) => ({ ire: s.ire, r: s.r ?? s[src]!, g: s.g ?? s[src]!, b: s.b ?? s[src]! }))
	};
}
