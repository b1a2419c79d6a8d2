/**
 * Scope trace import: a CSV export of one video line of the 11-step grey
 * pattern (0..100 IRE) -> one robust level per step per channel.
 *
 * Why it works the way it does: real exports differ in separator (comma,
 * semicolon, tab), decimal mark, units, index columns, metadata above the
 * data and header/unit rows; the line carries sync and blanking before the
 * steps; every edge rings. So the importer finds where the numbers start,
 * reads them straight into typed arrays (no per-sample objects), smooths
 * with a running median (a sorted window updated in place), keeps only the
 * flat stretches, merges stretches at one level, picks the longest run of
 * levels rising (or falling, read back in IRE order) one after another,
 * uses the typical step duration to split a stretch that holds several
 * equal steps (clipped highlights), and refuses a staircase that does not
 * have 11 steps. Levels and noise come from the median and MAD of the
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
	/** Called now and then with the fraction done (0..1), e.g. from a Web Worker. */
	onProgress?: (fraction: number) => void;
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

/**
 * Codes in TraceImport.warnings; TRACE_WARNING_WORDS says each in words.
 */
export type TraceWarning =
	| 'no-header'
	| 'channel-order-assumed'
	| 'channels-assumed'
	| 'units-from-magnitude'
	| 'equal-steps-split'
	| 'channels-misaligned'
	| 'noisy'
	| 'descending-staircase'
	| 'index-column-skipped'
	| 'preamble-skipped'
	| 'rows-skipped';

export const TRACE_WARNING_WORDS: Record<TraceWarning, string> = {
	'no-header': 'no header row: columns read as time then voltages',
	'channel-order-assumed': 'channel names not in the header: read as red, green, blue in column order',
	'channels-assumed': 'channel names not in the header: assumed from the column count',
	'units-from-magnitude': 'no unit in the header: V or mV judged from the size of the numbers',
	'equal-steps-split': 'two or more steps read the same level and were split by the step duration',
	'channels-misaligned': 'the channels\u2019 steps do not line up in time',
	noisy: 'the trace is noisy (more than 5 mV typical noise)',
	'descending-staircase': 'the staircase falls from white to black; read in IRE order (0 IRE first)',
	'index-column-skipped': 'the first column counts samples; it was skipped and the next one read as time',
	'preamble-skipped': 'lines of scope settings above the data were skipped',
	'rows-skipped': 'some rows in the data were not numbers and were skipped'
};

export interface TraceImport {
	steps: Array<{ ire: number; r?: number; g?: number; b?: number }>;
	/** Typical noise (median of the plateau noise figures), mV. */
	noiseMv: number;
	warnings: TraceWarning[];
	plateaus: Partial<Record<Channel, TracePlateau[]>>;
	channels: TraceChannel[];
	samples?: { time: number[]; mv: Partial<Record<Channel, number[]>> };
}

const MAX_SAMPLES_KEPT = 4000;
/** Values taken (evenly spaced) for whole-trace statistics: plenty for a median. */
const STAT_SAMPLE = 65536;
const STEP_COUNT = ALL_STEPS_IRE.length;
/** A plateau this far below blanking, as a fraction of white, is sync, not a step. */
const SYNC_BELOW_WHITE = 0.15;

// ---------------------------------------------------------------- robust statistics on typed arrays

/** k-th smallest of a[0..n) (Hoare quickselect, in place). */
function select(a: Float64Array, n: number, k: number): number {
	let lo = 0;
	let hi = n - 1;
	while (lo < hi) {
		const pivot = a[(lo + hi) >> 1];
		let i = lo;
		let j = hi;
		while (i <= j) {
			while (a[i] < pivot) i++;
			while (a[j] > pivot) j--;
			if (i <= j) {
				const t = a[i];
				a[i] = a[j];
				a[j] = t;
				i++;
				j--;
			}
		}
		if (k <= j) hi = j;
		else if (k >= i) lo = i;
		else return a[k];
	}
	return a[k];
}

/** Median of the first n values of a scratch array (reorders it). */
function medianInPlace(a: Float64Array, n: number): number {
	if (n === 0) return NaN;
	const m = n >> 1;
	const hi = select(a, n, m);
	if (n % 2) return hi;
	let lo = -Infinity;
	for (let i = 0; i < m; i++) if (a[i] > lo) lo = a[i];
	return (lo + hi) / 2;
}

/** Reusable scratch space, so statistics allocate nothing per plateau. */
class Scratch {
	buf = new Float64Array(0);
	take(n: number): Float64Array {
		if (this.buf.length < n) this.buf = new Float64Array(n);
		return this.buf;
	}
}

/** Median of xs[start..end), or of at most STAT_SAMPLE evenly spaced values of it. */
function medianOf(xs: Float64Array, start: number, end: number, scratch: Scratch): number {
	const len = end - start;
	const stride = Math.max(1, Math.ceil(len / STAT_SAMPLE));
	const a = scratch.take(Math.ceil(len / stride));
	let n = 0;
	for (let i = start; i < end; i += stride) a[n++] = xs[i];
	return medianInPlace(a, n);
}

/** Robust sigma: 1.4826 x median absolute deviation, of xs[start..end). */
function robustSigmaOf(xs: Float64Array, start: number, end: number, scratch: Scratch): number {
	const m = medianOf(xs, start, end, scratch);
	const len = end - start;
	const stride = Math.max(1, Math.ceil(len / STAT_SAMPLE));
	const a = scratch.take(Math.ceil(len / stride));
	let n = 0;
	for (let i = start; i < end; i += stride) a[n++] = Math.abs(xs[i] - m);
	return 1.4826 * medianInPlace(a, n);
}

function quantileOf(xs: Float64Array, q: number, scratch: Scratch): number {
	const stride = Math.max(1, Math.ceil(xs.length / STAT_SAMPLE));
	const a = scratch.take(Math.ceil(xs.length / stride));
	let n = 0;
	for (let i = 0; i < xs.length; i += stride) a[n++] = xs[i];
	return select(a, n, Math.min(n - 1, Math.max(0, Math.round(q * (n - 1)))));
}

/**
 * Running median over a window of w samples (w odd; the window is cut short
 * at the ends). Keeps the window sorted and moves one value in and one out
 * per sample: O(n w) with no copies.
 */
export function runningMedian(xs: Float64Array, w: number): Float64Array {
	const n = xs.length;
	const h = (w - 1) >> 1;
	const out = new Float64Array(n);
	const win = new Float64Array(w);
	let len = 0;
	const insert = (v: number) => {
		let i = len++;
		while (i > 0 && win[i - 1] > v) {
			win[i] = win[i - 1];
			i--;
		}
		win[i] = v;
	};
	const remove = (v: number) => {
		let i = 0;
		while (i < len && win[i] !== v) i++;
		for (len--; i < len; i++) win[i] = win[i + 1];
	};
	for (let i = 0; i < Math.min(n, h + 1); i++) insert(xs[i]);
	for (let i = 0; i < n; i++) {
		out[i] = len % 2 ? win[len >> 1] : (win[(len >> 1) - 1] + win[len >> 1]) / 2;
		if (i - h >= 0) remove(xs[i - h]);
		if (i + h + 1 < n) insert(xs[i + h + 1]);
	}
	return out;
}

// ---------------------------------------------------------------- the text: separators, header, rows

interface Layout {
	sep: string | null; // null: runs of spaces
	decimalComma: boolean;
}

function splitFields(line: string, layout: Layout): string[] {
	const raw = layout.sep === null ? line.trim().split(/\s+/) : line.split(layout.sep);
	const f = raw.map((x) =>
		x
			.trim()
			.replace(/^"(.*)"$/, '$1')
			.trim()
	);
	while (f.length > 1 && f[f.length - 1] === '') f.pop();
	return f;
}

function parseField(f: string, decimalComma: boolean): number {
	if (f.length === 0) return NaN;
	const v = Number(decimalComma ? f.replace(',', '.') : f);
	return Number.isFinite(v) ? v : NaN;
}

/** Exact powers of ten (10^0 .. 10^22 are exactly representable as doubles). */
const POW10 = Float64Array.from({ length: 23 }, (_, i) => 10 ** i);

/**
 * The number in text[a, b), or NaN when the field is not a plain decimal
 * number. Reads the digits in place (no substring per field). Up to 15
 * significant digits and a power of ten up to 22 either way, the value is
 * one correctly rounded multiplication or division of exact doubles, so it
 * equals what Number() gives (Clinger's fast path); anything longer falls
 * back to Number().
 */
function numberAt(text: string, a: number, b: number, decimalComma: boolean): number {
	while (a < b && text.charCodeAt(a) === 32) a++;
	while (b > a && text.charCodeAt(b - 1) === 32) b--;
	let i = a;
	let c = text.charCodeAt(i);
	const neg = c === 45;
	if (neg || c === 43) i++;
	const point = decimalComma ? 44 : 46;
	let m = 0;
	let sig = 0;
	let exp = 0;
	let digits = 0;
	let seenPoint = false;
	for (; i < b; i++) {
		c = text.charCodeAt(i);
		if (c >= 48 && c <= 57) {
			digits++;
			if (m === 0 && c === 48) {
				if (seenPoint) exp--;
				continue;
			}
			if (++sig > 15) return slowNumber(text, a, b, decimalComma);
			m = m * 10 + (c - 48);
			if (seenPoint) exp--;
		} else if (c === point && !seenPoint) seenPoint = true;
		else break;
	}
	if (digits === 0) return NaN;
	if (i < b) {
		if (c !== 101 && c !== 69) return NaN; // e, E
		i++;
		let eneg = false;
		c = text.charCodeAt(i);
		if (c === 45 || c === 43) {
			eneg = c === 45;
			i++;
		}
		let e = 0;
		let edigits = 0;
		for (; i < b; i++) {
			c = text.charCodeAt(i);
			if (c < 48 || c > 57) return NaN;
			e = e * 10 + (c - 48);
			edigits++;
			if (e > 400) return slowNumber(text, a, b, decimalComma);
		}
		if (edigits === 0) return NaN;
		exp += eneg ? -e : e;
	}
	let v: number;
	if (m === 0) v = 0;
	else if (exp >= 0 && exp <= 22) v = m * POW10[exp];
	else if (exp < 0 && exp >= -22) v = m / POW10[-exp];
	else return slowNumber(text, a, b, decimalComma);
	return neg ? -v : v;
}

function slowNumber(text: string, a: number, b: number, decimalComma: boolean): number {
	const f = text.slice(a, b);
	const v = Number(decimalComma ? f.replace(',', '.') : f);
	return Number.isFinite(v) ? v : NaN;
}

/** Separator and decimal mark, from lines in the middle of the file (data, not preamble). */
function detectLayout(sample: string[]): Layout {
	const count = (ch: string) => sample.filter((l) => l.includes(ch)).length;
	const half = sample.length / 2;
	if (count('\t') >= half) return { sep: '\t', decimalComma: count(',') >= half };
	if (count(';') >= half) return { sep: ';', decimalComma: count(',') >= half };
	if (count(',') >= half) return { sep: ',', decimalComma: false };
	return { sep: null, decimalComma: false };
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
	const tokens = text
		.toLowerCase()
		.split(/[^a-z]+/)
		.filter(Boolean);
	if (tokens.includes('red') || tokens.includes('r')) return 'r';
	if (tokens.includes('green') || tokens.includes('g')) return 'g';
	if (tokens.includes('blue') || tokens.includes('b')) return 'b';
	return null;
}

const UNIT_ROW_RE = /^[([]?(s|ms|us|µs|ns|sec|seconds?|v|mv|volts?|pts?|points?|samples?|#|)[)\]]?$/i;
const INDEX_NAME_RE = /^(#|no\.?|n|nr\.?|index|idx|sample|samples|point|pt|pts|seq)$/i;

/** Positions of line starts: one pass of indexOf, no array of strings. */
function lineStarts(text: string): { starts: Int32Array | Float64Array; count: number } {
	let count = 1;
	for (let i = text.indexOf('\n'); i !== -1; i = text.indexOf('\n', i + 1)) count++;
	const starts = text.length < 0x7fffffff ? new Int32Array(count + 1) : new Float64Array(count + 1);
	let k = 0;
	starts[k++] = 0;
	for (let i = text.indexOf('\n'); i !== -1; i = text.indexOf('\n', i + 1)) starts[k++] = i + 1;
	starts[k] = text.length + 1;
	return { starts, count };
}

// ---------------------------------------------------------------- plateaus

/**
 * 1 where max - min of xs over [i - half, i + half] is at most thr (0 near
 * the ends): sliding minimum and maximum with monotonic deques, O(n).
 */
function flatMask(xs: Float64Array, half: number, thr: number): Uint8Array {
	const n = xs.length;
	const out = new Uint8Array(n);
	const span = 2 * half + 1;
	if (n < span) return out;
	const maxQ = new Int32Array(n);
	const minQ = new Int32Array(n);
	let maxHead = 0;
	let maxTail = 0;
	let minHead = 0;
	let minTail = 0;
	for (let j = 0; j < n; j++) {
		const v = xs[j];
		while (maxTail > maxHead && xs[maxQ[maxTail - 1]] <= v) maxTail--;
		maxQ[maxTail++] = j;
		while (minTail > minHead && xs[minQ[minTail - 1]] >= v) minTail--;
		minQ[minTail++] = j;
		const start = j - span + 1; // window [start, j], centred on start + half
		if (start < 0) continue;
		while (maxQ[maxHead] < start) maxHead++;
		while (minQ[minHead] < start) minHead++;
		if (xs[maxQ[maxHead]] - xs[minQ[minHead]] <= thr) out[start + half] = 1;
	}
	return out;
}

interface Run {
	start: number; // sample index
	end: number; // exclusive
	level: number;
}

/** Central 60 % of a stretch (clear of the ringing at both edges). */
function central(p: { start: number; end: number }): [number, number] {
	const trim = Math.floor((p.end - p.start) * 0.2);
	return [p.start + trim, p.end - trim];
}

/** Find the 11 step plateaus of one channel (values in mV). */
function findSteps(
	time: Float64Array,
	mv: Float64Array,
	name: string,
	scratch: Scratch
): { plateaus: TracePlateau[]; split: boolean; descending: boolean } {
	const n = mv.length;
	// First differences are noise almost everywhere (edges are few): a robust
	// sigma of them, over sqrt(2), is the sample noise.
	const diffs = new Float64Array(Math.min(n - 1, STAT_SAMPLE));
	const dstride = Math.max(1, Math.ceil((n - 1) / STAT_SAMPLE));
	let nd = 0;
	for (let i = 1; i < n && nd < diffs.length; i += dstride) diffs[nd++] = mv[i] - mv[i - 1];
	const sigma = robustSigmaOf(diffs, 0, nd, scratch) / Math.SQRT2;
	// Window grows with the sample rate but is capped: past ~21 samples a
	// wider median only costs time.
	const w = Math.min(21, Math.max(5, (Math.round(n / 300) >> 1) * 2 + 1));
	const h = (w - 1) >> 1;
	const s = runningMedian(mv, w);
	const flatThr = Math.max(4 * sigma, 1.5);
	const mergeThr = Math.max(6 * sigma, 3);
	const minLen = Math.max(2 * w, Math.round(n / 150));

	// Flat where the smoothed signal moves less than flatThr across a stretch
	// of fixed duration (a fraction of the line, so an edge is never missed
	// however finely it is sampled).
	const flat = flatMask(s, Math.max(h, Math.round(n / 600)), flatThr);
	const levelOf = (p: { start: number; end: number }) => {
		const [a, b] = central(p);
		return medianOf(mv, a, b, scratch);
	};
	const runs: Run[] = [];
	for (let i = 0; i < n;) {
		if (!flat[i]) {
			i++;
			continue;
		}
		let j = i;
		while (j < n && flat[j]) j++;
		if (j - i >= minLen) runs.push({ start: i, end: j, level: levelOf({ start: i, end: j }) });
		i = j;
	}
	// Merge neighbours at one level (a noise burst or a ripple can cut a plateau).
	const merged: Run[] = [];
	for (const r of runs) {
		const last = merged[merged.length - 1];
		if (last && Math.abs(last.level - r.level) < mergeThr) {
			last.end = r.end;
			last.level = levelOf(last);
		} else merged.push({ ...r });
	}
	// Longest chain of plateaus rising one after another, or falling (ties: rising).
	const longest = (dir: 1 | -1) => {
		let bestStart = 0;
		let bestLen = merged.length ? 1 : 0;
		for (let i = 0; i < merged.length;) {
			let j = i + 1;
			while (j < merged.length && dir * (merged[j].level - merged[j - 1].level) > 0) j++;
			if (j - i > bestLen) {
				bestLen = j - i;
				bestStart = i;
			}
			i = j;
		}
		return merged.slice(bestStart, bestStart + bestLen);
	};
	const up = longest(1);
	const down = longest(-1);
	const descending = down.length > up.length;
	// In IRE order: lowest level first. Sync (well below blanking, where the
	// black step sits) is not a step.
	const ordered = descending ? down.reverse() : up;
	const top = ordered.length ? ordered[ordered.length - 1].level : 0;
	let firstStep = 0;
	while (firstStep < ordered.length - 1 && ordered[firstStep].level < -SYNC_BELOW_WHITE * Math.abs(top)) firstStep++;
	const chain = ordered.slice(firstStep);
	const fail = (found: number) =>
		new LevelInputError(
			`not 11 rising plateaus on ${name}: found ${found} step levels rising one after another, expected 11 (the 0 to 100 IRE grey steps). Check that the capture shows one whole line of the step pattern.`
		);
	if (chain.length < 3) throw fail(chain.length);
	if (chain[chain.length - 1].level - chain[0].level < 10 * mergeThr) throw fail(0);
	// Typical step duration and pitch from the inner plateaus (the black one
	// also holds blanking, so it is left out and always counts as one step).
	const byTime = [...chain].sort((a, b) => a.start - b.start);
	const inner = chain.length > 3 ? chain.slice(1, -1) : chain.slice(1);
	const durs = Float64Array.from(inner, (r) => r.end - r.start);
	const dur = medianInPlace(durs, durs.length);
	const starts = Float64Array.from(byTime.slice(1), (r, k) => r.start - byTime[k].start);
	const pitch = (starts.length > 1 ? medianInPlace(starts.subarray(1), starts.length - 1) : 0) || dur;
	const gap = Math.max(0, pitch - dur);
	const pieces: Array<{ start: number; end: number; run: number }> = [];
	chain.forEach((r, k) => {
		const count = k === 0 ? 1 : Math.max(1, Math.round((r.end - r.start + gap) / pitch));
		const len = (r.end - r.start - (count - 1) * gap) / count;
		const order = Array.from({ length: count }, (_, p) => p);
		// A falling staircase holds its equal steps in falling IRE order in time.
		if (descending) order.reverse();
		for (const p of order) {
			const start = Math.round(r.start + p * (len + gap));
			pieces.push({ start, end: Math.round(start + len), run: k });
		}
	});
	if (pieces.length < STEP_COUNT) throw fail(pieces.length);
	if (pieces.length > STEP_COUNT)
		throw new LevelInputError(
			`${pieces.length} steps on ${name}, expected 11: found a staircase of ${pieces.length} levels ${descending ? 'falling' : 'rising'} one after another, but the level analysis needs the 11-step grey pattern (0, 10, ..., 100 IRE). Capture the 11-step pattern.`
		);
	const split = chain.length !== pieces.length;
	const plateaus = pieces.map((p, i) => {
		const [a, b] = central(p);
		return {
			ire: ALL_STEPS_IRE[i],
			start: time[p.start],
			end: time[Math.min(n - 1, p.end - 1)],
			levelMv: medianOf(mv, a, b, scratch),
			noiseMv: robustSigmaOf(mv, a, b, scratch)
		};
	});
	return { plateaus, split, descending };
}

// ---------------------------------------------------------------- import

/**
 * Read a scope CSV export of one video line of the 0..100 IRE 11-step grey
 * pattern and return the level of each step per channel, with noise,
 * plateau positions (for drawing) and warnings. Throws LevelInputError with
 * a plain message when the file is empty, has no numeric columns, has
 * unclear units, or does not show an 11-step staircase.
 */
export function importTrace(csvText: string, options: ImportTraceOptions = {}): TraceImport {
	if (typeof csvText !== 'string') throw new LevelInputError('empty file: expected CSV text');
	const text = csvText.charCodeAt(0) === 0xfeff ? csvText.slice(1) : csvText;
	const progress = options.onProgress ?? (() => {});
	const { starts, count: lineCount } = lineStarts(text);
	const lineAt = (k: number) => {
		let e = starts[k + 1] - 1;
		if (e > starts[k] && text.charCodeAt(e - 1) === 13) e--; // CRLF
		return text.slice(starts[k], e);
	};
	// Lines that are blank are ignored everywhere.
	const nonBlank: number[] = [];
	for (let k = 0; k < lineCount && nonBlank.length < 400; k++) if (lineAt(k).trim()) nonBlank.push(k);
	if (nonBlank.length === 0) throw new LevelInputError('empty file: the trace has no lines');
	const warnings: TraceWarning[] = [];
	const warn = (w: TraceWarning) => {
		if (!warnings.includes(w)) warnings.push(w);
	};

	// Separator from the middle of the file, where the numbers are.
	const mid: string[] = [];
	for (let k = Math.floor(lineCount / 2); k < lineCount && mid.length < 40; k++) {
		const l = lineAt(k);
		if (l.trim()) mid.push(l);
	}
	const layout = detectLayout(mid.length >= 5 ? mid : nonBlank.slice(0, 50).map(lineAt));

	// Where the numbers start: the first line of a block of numeric rows of one width.
	const head = nonBlank.map((k) => {
		const fields = splitFields(lineAt(k), layout);
		const nums = fields.map((f) => parseField(f, layout.decimalComma));
		return { k, fields, numeric: nums.every((x) => !Number.isNaN(x)) };
	});
	let firstData = -1;
	for (let i = 0; i < head.length; i++) {
		if (!head[i].numeric) continue;
		const width = head[i].fields.length;
		let ok = 0;
		for (let j = i + 1; j < Math.min(head.length, i + 6); j++)
			if (head[j].numeric && head[j].fields.length === width) ok++;
		if (ok >= Math.min(5, head.length - i - 1)) {
			firstData = i;
			break;
		}
	}
	if (firstData < 0)
		throw new LevelInputError('no numeric columns: expected a time column and one to three voltage columns of numbers');
	const width = head[firstData].fields.length;
	if (width < 2)
		throw new LevelInputError(
			'only one numeric column: expected a time column followed by one to three voltage columns'
		);

	// Header (and an optional units row) just above the data; anything above them is a preamble.
	let header: string[] | undefined;
	let unitsRow: string[] | undefined;
	let above = firstData - 1;
	if (above >= 0 && head[above].fields.length === width && head[above].fields.every((x) => UNIT_ROW_RE.test(x))) {
		unitsRow = head[above].fields;
		above--;
	}
	if (above >= 0 && head[above].fields.length === width && !head[above].numeric) {
		header = head[above].fields;
		above--;
	}
	if (!header) warn('no-header');
	if (above >= 0) warn('preamble-skipped');

	// The numbers, straight into one typed array per column.
	const firstLine = head[firstData].k;
	const capacity = lineCount - firstLine;
	const cols = Array.from({ length: width }, () => new Float64Array(capacity));
	let rows = 0;
	let skipped = 0;
	const sep = layout.sep;
	const dc = layout.decimalComma;
	const progressEvery = 65536;
	for (let k = firstLine; k < lineCount; k++) {
		if ((k & (progressEvery - 1)) === 0) progress((0.8 * (k - firstLine)) / capacity);
		let a = starts[k];
		let e = starts[k + 1] - 1;
		if (e > a && text.charCodeAt(e - 1) === 13) e--;
		if (e <= a) continue;
		let c = 0;
		let bad = false;
		if (sep === null || text.charCodeAt(a) === 34 /* " */) {
			const f = splitFields(text.slice(a, e), layout);
			if (f.length !== width) bad = true;
			else
				for (; c < width; c++) {
					const v = parseField(f[c], dc);
					if (Number.isNaN(v)) {
						bad = true;
						break;
					}
					cols[c][rows] = v;
				}
		} else {
			while (c < width) {
				let b = text.indexOf(sep, a);
				if (b === -1 || b > e) b = e;
				const v = numberAt(text, a, b, dc);
				if (v !== v) {
					bad = true;
					break;
				}
				cols[c++][rows] = v;
				a = b + 1;
				if (b === e) break;
			}
			// More fields than the data width: only empty trailing ones are allowed.
			if (
				!bad &&
				c === width &&
				a <= e &&
				text
					.slice(a, e)
					.split(sep)
					.some((x) => x.trim() !== '')
			)
				bad = true;
			if (c < width) bad = true;
		}
		if (bad) {
			if (text.slice(starts[k], e).trim()) skipped++;
			continue;
		}
		rows++;
	}
	if (skipped > 0) warn('rows-skipped');

	// An index column (0, 1, 2, ... sample numbers) before the time column is skipped.
	let first = 0;
	const isIndex = (col: Float64Array) => {
		if (rows < 2) return false;
		const step = col[1] - col[0];
		if (!Number.isInteger(col[0]) || !(step === 1 || step === -1)) return false;
		// Sample numbers only count as an index when a time column follows.
		const next = cols[1];
		for (let i = 1; i < rows; i++) if (!(next[i] > next[i - 1])) return false;
		const probe = Math.max(1, Math.floor(rows / 97));
		for (let i = 0; i < rows; i += probe) if (col[i] !== col[0] + i * step) return false;
		return col[rows - 1] === col[0] + (rows - 1) * step;
	};
	if (width >= 3 && (INDEX_NAME_RE.test(header?.[0] ?? '') || isIndex(cols[0]))) {
		first = 1;
		warn('index-column-skipped');
	}
	const dataCols = width - first;
	if (dataCols < 2)
		throw new LevelInputError(
			'only one numeric column: expected a time column followed by one to three voltage columns'
		);
	if (dataCols > 4)
		throw new LevelInputError(
			`${dataCols} numeric columns: expected a time column followed by one to three voltage columns`
		);
	if (rows < 110)
		throw new LevelInputError(`too few samples (${rows}) to find 11 steps; export the whole line at full resolution`);

	const time = cols[first].subarray(0, rows);
	for (let i = 1; i < rows; i++) {
		if (time[i] < time[i - 1])
			throw new LevelInputError('the first column does not rise steadily, so it is not a time column; put time first');
	}
	if (time[rows - 1] <= time[0]) throw new LevelInputError('the time column does not advance');
	const hdr = (j: number) => header?.[first + j];
	const unitCell = (j: number) => unitsRow?.[first + j];

	// Channel mapping.
	const nv = dataCols - 1;
	let mapping: Channel[];
	if (options.channels) {
		if (options.channels.length !== nv || new Set(options.channels).size !== nv)
			throw new LevelInputError(`options.channels must name ${nv} different channels, one per voltage column`);
		mapping = options.channels;
	} else {
		const named = Array.from({ length: nv }, (_, j) => channelFromHeader(hdr(j + 1)));
		if (named.every((c) => c) && new Set(named).size === nv) mapping = named as Channel[];
		else {
			mapping = nv === 1 ? ['g'] : nv === 2 ? ['r', 'g'] : ['r', 'g', 'b'];
			warn(nv === 3 ? 'channel-order-assumed' : 'channels-assumed');
		}
	}

	const scratch = new Scratch();
	const channels: TraceChannel[] = [];
	const mvByChannel: Partial<Record<Channel, Float64Array>> = {};
	for (let j = 0; j < nv; j++) {
		const raw = cols[first + j + 1].subarray(0, rows);
		const column = hdr(j + 1) ?? `column ${first + j + 2}`;
		let unit: VoltageUnit;
		let unitFrom: TraceChannel['unitFrom'];
		const fromHeader = unitFromHeader(hdr(j + 1)) ?? unitFromHeader(unitCell(j + 1));
		if (options.units) {
			unit = options.units;
			unitFrom = 'option';
		} else if (fromHeader) {
			unit = fromHeader;
			unitFrom = 'header';
		} else {
			// A video line spans well under 3 V (sync to an unterminated white)
			// and, in mV, at least tens of mV: anything between is ambiguous.
			const span = quantileOf(raw, 0.995, scratch) - quantileOf(raw, 0.005, scratch);
			if (span <= 3) unit = 'V';
			else if (span >= 30) unit = 'mV';
			else
				throw new LevelInputError(
					`units unclear for ${column}: the values span ${span.toPrecision(3)}, which is neither clearly volts nor millivolts; put (V) or (mV) in the header`
				);
			unitFrom = 'magnitude';
			warn('units-from-magnitude');
		}
		const ch = mapping[j];
		channels.push({ channel: ch, column, unit, unitFrom });
		if (unit === 'V') for (let i = 0; i < rows; i++) raw[i] *= 1000;
		mvByChannel[ch] = raw;
	}
	progress(0.85);

	const plateaus: Partial<Record<Channel, TracePlateau[]>> = {};
	channels.forEach((c, j) => {
		const res = findSteps(time, mvByChannel[c.channel]!, `${CHANNEL_NAMES[c.channel]} (${c.column})`, scratch);
		plateaus[c.channel] = res.plateaus;
		if (res.split) warn('equal-steps-split');
		if (res.descending) warn('descending-staircase');
		progress(0.85 + (0.15 * (j + 1)) / channels.length);
	});
	// The channels come from one pattern: their steps should line up in time.
	const present = channels.map((c) => plateaus[c.channel]!);
	if (present.length > 1) {
		const pitch = Math.abs(present[0][10].start - present[0][1].start) / 9;
		const off = present.some((p) => p.some((q, i) => i > 0 && Math.abs(q.start - present[0][i].start) > pitch / 2));
		if (off) warn('channels-misaligned');
	}
	const noises = Float64Array.from(present.flat(), (p) => p.noiseMv);
	const noiseMv = medianInPlace(noises, noises.length);
	if (noiseMv > 5) warn('noisy');

	const round1 = (x: number) => Math.round(x * 10) / 10;
	const steps = ALL_STEPS_IRE.map((ire, i) => {
		const s: { ire: number; r?: number; g?: number; b?: number } = { ire };
		for (const c of channels) s[c.channel] = round1(plateaus[c.channel]![i].levelMv);
		return s;
	});

	const result: TraceImport = { steps, noiseMv: Math.round(noiseMv * 100) / 100, warnings, plateaus, channels };
	if (options.includeSamples !== false) {
		const stride = Math.ceil(rows / MAX_SAMPLES_KEPT);
		const pick = (xs: Float64Array) => {
			const out: number[] = [];
			for (let i = 0; i < xs.length; i += stride) out.push(xs[i]);
			return out;
		};
		result.samples = {
			time: pick(time),
			mv: Object.fromEntries(channels.map((c) => [c.channel, pick(mvByChannel[c.channel]!)]))
		};
	}
	progress(1);
	return result;
}

/**
 * Turn an imported trace into analysis input. All three channels must be
 * present unless `copyMissing` is set, which fills absent channels with a
 * copy of a measured one (say so wherever the result is shown).
 */
export function traceToLevelInput(
	trace: TraceImport,
	options: { copyMissing?: boolean; fullScaleMv?: number } = {}
): LevelInput {
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
