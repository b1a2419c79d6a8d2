/**
 * Restock outlook: how long a listing's sold-out spells usually last before it comes back, and how
 * long its stock lasts once back, from the listing's own change points. Pure.
 *
 * Spells are read from the stock states the poller stored (one change point per change; 'unknown'
 * readings are skipped, as the poller does when it judges restocks):
 * - an out-of-stock spell runs from a sell-out (buyable -> known not buyable) to the next restock;
 * - an in-stock spell runs from a restock to the next sell-out;
 * - the state the history starts in is not a spell (we do not know when it began);
 * - the spell running now is unfinished: it counts as censored at `now` (or the delisting).
 *
 * Durations are estimated with the Kaplan-Meier product-limit estimator (E. L. Kaplan, P. Meier,
 * "Nonparametric estimation from incomplete observations", JASA 53(282):457-481, 1958):
 * S(t) = product over event times t_i <= t of (1 - d_i / n_i); a censored spell leaves the risk set
 * without an event, so a listing sold out for longer than ever before still pulls the estimate up.
 */
import { isBuyable, type StockState } from './pricing';

export interface Spell {
	/** Milliseconds (any unit works for the estimator). */
	duration: number;
	/** True when the spell had not ended when observed (the current one). */
	censored: boolean;
	/** When the spell ended, or when it was last seen running (ms since the epoch); listingSpells sets it. */
	end?: number;
}

export interface KmStep {
	/** Event time. */
	t: number;
	/** Spells still running just before t. */
	atRisk: number;
	/** Spells ending at t. */
	events: number;
	/** Censored spells at t (they count as at risk at t). */
	censored: number;
	/** S(t): estimated share of spells lasting longer than t. */
	survival: number;
}

export interface KmEstimate {
	steps: KmStep[];
	/** Smallest event time with S(t) <= 0.5; null when the curve never reaches one half. */
	median: number | null;
	/** Finished spells (events). */
	events: number;
	/** All spells, the censored ones included. */
	spells: number;
}

/**
 * Kaplan-Meier product-limit estimate. At tied times events are taken before censorings (the usual
 * convention: a spell censored at t was at risk at t).
 */
export function kaplanMeier(spells: readonly Spell[]): KmEstimate {
	for (const s of spells) {
		if (!(Number.isFinite(s.duration) && s.duration >= 0))
			throw new RangeError(`spell duration must be a finite number >= 0, got ${s.duration}`);
	}
	const sorted = [...spells].sort((a, b) => a.duration - b.duration || Number(a.censored) - Number(b.censored));
	const steps: KmStep[] = [];
	let atRisk = sorted.length;
	let survival = 1;
	let median: number | null = null;
	for (let i = 0; i < sorted.length;) {
		const t = sorted[i].duration;
		let events = 0;
		let censored = 0;
		while (i < sorted.length && sorted[i].duration === t) {
			if (sorted[i].censored) censored++;
			else events++;
			i++;
		}
		if (events) {
			survival *= 1 - events / atRisk;
			steps.push({ t, atRisk, events, censored, survival });
			if (median === null && survival <= 0.5 + 1e-12) median = t;
		}
		atRisk -= events + censored;
	}
	return { steps, median, events: spells.filter((s) => !s.censored).length, spells: spells.length };
}

/** S(t) from an estimate: 1 before the first event, flat between events. */
export function survivalAt(km: KmEstimate, t: number): number {
	let s = 1;
	for (const step of km.steps) {
		if (step.t > t) break;
		s = step.survival;
	}
	return s;
}

/**
 * Chance that a spell already `age` long ends within the next `horizon`:
 * 1 - S(age + horizon) / S(age). Null when S(age) is 0 (the spell outlived every past one
 * that ended, so the history says nothing).
 */
export function endsWithin(km: KmEstimate, age: number, horizon: number): number | null {
	const now = survivalAt(km, age);
	if (now <= 0) return null;
	return 1 - survivalAt(km, age + horizon) / now;
}

export interface StockPoint {
	at: Date;
	stock: StockState;
}

export interface ListingSpells {
	/** Spells sold out before coming back (the current one censored when it is running). */
	out: Spell[];
	/** Spells in stock before selling out. */
	in: Spell[];
	/** The state now, judged from the last known point; null with no known point. */
	current: {
		buyable: boolean;
		since: Date;
		/** True when `since` is a real transition, not the start of history. */ spellStarted: boolean;
	} | null;
}

/** Out-of-stock and in-stock spells of one listing from its change points (sorted by time). */
export function listingSpells(points: readonly StockPoint[], now: Date): ListingSpells {
	const out: Spell[] = [];
	const inStock: Spell[] = [];
	let known: boolean | null = null;
	let since: number | null = null;
	let started = false;
	const end = now.getTime();
	const sorted = [...points].sort((a, b) => a.at.getTime() - b.at.getTime());
	for (const p of sorted) {
		const t = p.at.getTime();
		if (p.stock === 'unknown' || t > end) continue;
		const buyable = isBuyable(p.stock);
		if (known === null) {
			known = buyable;
			since = t;
			continue;
		}
		if (buyable === known) continue;
		if (started) (known ? inStock : out).push({ duration: t - since!, censored: false, end: t });
		known = buyable;
		since = t;
		started = true;
	}
	if (known === null) return { out, in: inStock, current: null };
	if (started) (known ? inStock : out).push({ duration: Math.max(0, end - since!), censored: true, end });
	return { out, in: inStock, current: { buyable: known, since: new Date(since!), spellStarted: started } };
}

/** Fewer finished spells than this and the outlook says nothing. */
export const MIN_OUTLOOK_SPELLS = 3;

export interface DurationFigure {
	/** Kaplan-Meier median in milliseconds; null when too few spells ended or S never reached 1/2. */
	medianMs: number | null;
	/** Finished spells behind the figure (the sample size shown). */
	spells: number;
}

export interface RestockOutlook {
	/** 'out' or 'in' now; null when no stock state is known. */
	state: 'out' | 'in' | null;
	/** How long the current state has lasted (from the transition into it, or the first reading). */
	currentForMs: number | null;
	/** Out-of-stock spells until a restock. */
	restock: DurationFigure;
	/** In-stock spells until a sell-out. */
	sellout: DurationFigure;
	/** The outlook in words; null when there is nothing worth saying (fewer than MIN_OUTLOOK_SPELLS spells). */
	text: string | null;
}

const HOUR = 3_600_000;
const DAY = 24 * HOUR;

/** A duration in words a buyer reads at a glance: hours below two days, days below four weeks, then weeks. */
export function formatSpan(ms: number): string {
	const plural = (n: number, unit: string) => `${n} ${unit}${n === 1 ? '' : 's'}`;
	if (ms < 2 * DAY) return plural(Math.max(1, Math.round(ms / HOUR)), 'hour');
	if (ms < 28 * DAY) return plural(Math.round(ms / DAY), 'day');
	return plural(Math.round(ms / (7 * DAY)), 'week');
}

function figure(spells: Spell[]): DurationFigure & { km: KmEstimate } {
	const km = kaplanMeier(spells);
	return { km, spells: km.events, medianMs: km.events >= MIN_OUTLOOK_SPELLS ? km.median : null };
}

/** The restock outlook of one listing from its change points. */
export function restockOutlook(points: readonly StockPoint[], now: Date): RestockOutlook {
	const s = listingSpells(points, now);
	const restock = figure(s.out);
	const sellout = figure(s.in);
	const state = s.current ? (s.current.buyable ? 'in' : 'out') : null;
	const currentForMs = s.current ? now.getTime() - s.current.since.getTime() : null;
	return {
		state,
		currentForMs,
		restock: strip(restock),
		sellout: strip(sellout),
		text: outlookText(state, currentForMs, restock, sellout)
	};
}

const strip = ({ medianMs, spells }: DurationFigure): DurationFigure => ({ medianMs, spells });
const spellsWord = (n: number) => `${n} spell${n === 1 ? '' : 's'}`;

function outlookText(
	state: 'out' | 'in' | null,
	currentForMs: number | null,
	restock: DurationFigure,
	sellout: DurationFigure
): string | null {
	const restockPart =
		restock.spells < MIN_OUTLOOK_SPELLS
			? null
			: restock.medianMs !== null
				? `past restocks came after a median of ${formatSpan(restock.medianMs)} (${spellsWord(restock.spells)})`
				: `most past sell-outs had not ended in a restock yet (${spellsWord(restock.spells)} did)`;
	let selloutPart: string | null = null;
	if (sellout.spells >= MIN_OUTLOOK_SPELLS) {
		selloutPart =
			(restockPart ? 'once back, ' : 'once in stock, ') +
			(sellout.medianMs !== null
				? `half sold out within ${formatSpan(sellout.medianMs)}`
				: 'most stock outlasted what we have seen') +
			(restockPart ? '' : ` (${spellsWord(sellout.spells)})`);
	}
	const parts = [restockPart, selloutPart].filter((p): p is string => !!p);
	if (!parts.length) return null;
	const lead =
		currentForMs === null || state === null
			? ''
			: `${state === 'out' ? 'Out of stock' : 'In stock'} for ${formatSpan(currentForMs)}. `;
	return `${lead}Here, ${parts.join('; ')}.`;
}
