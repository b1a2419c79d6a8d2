/**
 * `npm run bench:detection`: how soon a restock of a watched listing is seen, with the fixed schedule
 * and with the adaptive one, at the same requests per shop.
 *
 * A seeded, simulated stretch of shop behaviour: 5 shops x 24 listings, each listing following one of
 * the stock patterns the fake shops show (fast flips, slow restocks, mostly in stock, rarely back),
 * its sold-out and in-stock spells drawn from log-normal laws around the pattern's typical lengths.
 * 60 days of history are polled on the fixed schedule first (what the poller would have stored), then
 * the next 30 days are replayed twice from there: once with every listing on its own interval, once
 * with the real planner ($lib/poll-plan: planIntervals, re-planned every 15 minutes from the observed
 * history only) and the real next-poll rule (polling/schedule.ts: nextPollAfterSuccess, with jitter),
 * on an injected clock. No network and no database: the claim query and the shop gate are measured by
 * bench:poller and the integration tests.
 *
 * Prints median and 90th-percentile detection delay for restocks of watched listings (restock at the
 * shop until the first poll that sees it), restocks missed entirely (back and gone between two
 * polls), requests per shop per day, and ends with `adaptive/fixed median delay: <ratio>`.
 * Options: BENCH_SEED (1), BENCH_LISTINGS_PER_SHOP (24).
 */
import { planIntervals, type PlanInput, type PlannedInterval } from '../src/lib/poll-plan';
import { nextPollAfterSuccess } from '../src/lib/server/polling/schedule';
import type { StockPoint } from '../src/lib/restock';

const SEED = Number(process.env.BENCH_SEED ?? 1);
const PER_SHOP = Number(process.env.BENCH_LISTINGS_PER_SHOP ?? 24);
const SHOPS = 5;
const MIN = 60_000;
const HOUR = 60 * MIN;
const DAY = 24 * HOUR;
const WARMUP_DAYS = 60;
const MEASURE_DAYS = 30;
const REPLAN_MS = 15 * MIN;
const T0 = Date.UTC(2026, 0, 1);

/** mulberry32: a small seeded generator (public domain), so every run sees the same month. */
function rng(seed: number) {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}
const random = rng(SEED);
/** Log-normal draw with median `median` and log-sd `sd` (Box-Muller). */
const logNormal = (median: number, sd: number) =>
	median * Math.exp(sd * Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random()));

/** The stock patterns of the fake shops, as typical spell lengths. */
const PATTERNS = {
	flipping: { out: 1.5 * DAY, in: 20 * HOUR },
	slowRestock: { out: 10 * DAY, in: 2 * DAY },
	mostlyIn: { out: 2 * DAY, in: 25 * DAY },
	rarelyBack: { out: 40 * DAY, in: 3 * DAY }
} as const;
type Pattern = keyof typeof PATTERNS;

interface SimListing {
	id: number;
	shopId: number;
	pattern: Pattern;
	watched: boolean;
	goodBand: boolean;
	intervalMinutes: number;
	/** Ground truth: times the state flips, starting in `startsIn`. */
	flips: number[];
	startsIn: boolean;
}

function makeListings(): SimListing[] {
	const names = Object.keys(PATTERNS) as Pattern[];
	const out: SimListing[] = [];
	let id = 1;
	for (let s = 1; s <= SHOPS; s++) {
		for (let k = 0; k < PER_SHOP; k++) {
			const pattern = names[Math.floor(random() * names.length)];
			const p = PATTERNS[pattern];
			const startsIn = random() < p.in / (p.in + p.out);
			const flips: number[] = [];
			let t = T0 - random() * (startsIn ? p.in : p.out);
			let buyable = startsIn;
			while (t < T0 + (WARMUP_DAYS + MEASURE_DAYS + 1) * DAY) {
				t += Math.max(10 * MIN, logNormal(buyable ? p.in : p.out, 0.5));
				flips.push(t);
				buyable = !buyable;
			}
			// About a quarter are watched, more often the ones that sell out; some have a good band.
			const watched = random() < (pattern === 'mostlyIn' ? 0.1 : 0.3);
			out.push({
				id: id++,
				shopId: s,
				pattern,
				watched,
				goodBand: random() < 0.3,
				intervalMinutes: 60,
				flips,
				startsIn
			});
		}
	}
	return out;
}

/** Ground truth at time t: buyable, and when the current state began. */
function truth(l: SimListing, t: number): { buyable: boolean; since: number } {
	let buyable = l.startsIn;
	let since = -Infinity;
	for (const f of l.flips) {
		if (f > t) break;
		buyable = !buyable;
		since = f;
	}
	return { buyable, since };
}

interface Observed {
	points: StockPoint[];
	nextPollAt: number;
	lastBuyable: boolean | null;
}

interface RunResult {
	delays: number[];
	missed: number;
	restocks: number;
	requestsPerShopDay: number[];
	maxPerShopHour: number[];
	minGapMinutes: number;
}

/**
 * Poll the listings from `from` to `to` on the simulated clock. `plan` null = fixed schedule.
 * `measure` collects detection delays (watched listings) and request counts.
 */
function run(
	listings: SimListing[],
	state: Map<number, Observed>,
	from: number,
	to: number,
	adaptive: boolean,
	measure: boolean
): RunResult {
	const res: RunResult = {
		delays: [],
		missed: 0,
		restocks: 0,
		requestsPerShopDay: Array(SHOPS).fill(0),
		maxPerShopHour: Array(SHOPS).fill(0),
		minGapMinutes: Infinity
	};
	const perHour = new Map<string, number>();
	const lastPoll = new Map<number, number>();
	let plan = new Map<number, PlannedInterval>();
	let planAt = -Infinity;
	const jitter = rng(SEED + 7);
	for (let t = from; t < to; t += MIN) {
		if (adaptive && t - planAt >= REPLAN_MS) {
			const inputs: PlanInput[] = listings.map((l) => ({
				listingId: l.id,
				shopId: l.shopId,
				intervalMinutes: l.intervalMinutes,
				watched: l.watched,
				goodBand: l.goodBand,
				points: state.get(l.id)!.points
			}));
			plan = planIntervals(inputs, new Map(listings.map((l) => [l.id, state.get(l.id)!.lastBuyable])), new Date(t));
			planAt = t;
		}
		for (const l of listings) {
			const o = state.get(l.id)!;
			if (o.nextPollAt > t) continue;
			const seen = truth(l, t);
			if (measure) {
				res.requestsPerShopDay[l.shopId - 1]++;
				const hourKey = `${l.shopId}|${Math.floor(t / HOUR)}`;
				perHour.set(hourKey, (perHour.get(hourKey) ?? 0) + 1);
				const prev = lastPoll.get(l.id);
				if (prev !== undefined) res.minGapMinutes = Math.min(res.minGapMinutes, (t - prev) / MIN);
				lastPoll.set(l.id, t);
			}
			if (o.lastBuyable !== seen.buyable) {
				if (
					measure &&
					l.watched &&
					o.lastBuyable === false &&
					seen.buyable &&
					seen.since >= from &&
					seen.since < to - DAY
				)
					res.delays.push((t - seen.since) / MIN);
				o.points.push({ at: new Date(t), stock: seen.buyable ? 'in_stock' : 'out_of_stock' });
				o.lastBuyable = seen.buyable;
			}
			const p = plan.get(l.id);
			const minutes = adaptive && p ? (seen.buyable ? p.in : p.out) : l.intervalMinutes;
			o.nextPollAt = nextPollAfterSuccess(new Date(t), minutes, jitter).getTime();
		}
	}
	if (measure) {
		// Restocks of watched listings in the window, and those never seen (back and gone between polls).
		for (const l of listings.filter((x) => x.watched)) {
			let buyable = l.startsIn;
			for (const f of l.flips) {
				buyable = !buyable;
				if (f >= from && f < to - DAY && buyable) res.restocks++;
			}
		}
		res.missed = res.restocks - res.delays.length;
		const days = (to - from) / DAY;
		res.requestsPerShopDay = res.requestsPerShopDay.map((n) => n / days);
		for (const [k, n] of perHour) {
			const shop = Number(k.split('|')[0]);
			res.maxPerShopHour[shop - 1] = Math.max(res.maxPerShopHour[shop - 1], n);
		}
	}
	return res;
}

const quantile = (xs: number[], q: number) => {
	if (!xs.length) return NaN;
	const s = [...xs].sort((a, b) => a - b);
	return s[Math.min(s.length - 1, Math.max(0, Math.ceil(q * s.length) - 1))];
};

const listings = makeListings();
const warm = new Map<number, Observed>(
	listings.map((l) => [l.id, { points: [], nextPollAt: T0 + random() * l.intervalMinutes * MIN, lastBuyable: null }])
);
const start = T0 + WARMUP_DAYS * DAY;
run(listings, warm, T0, start, false, false);
const copy = () =>
	new Map(
		[...warm].map(([id, o]) => [id, { points: [...o.points], nextPollAt: o.nextPollAt, lastBuyable: o.lastBuyable }])
	);
const end = start + MEASURE_DAYS * DAY;
const fixed = run(listings, copy(), start, end, false, true);
const adaptive = run(listings, copy(), start, end, true, true);

const watched = listings.filter((l) => l.watched).length;
console.log(
	`${SHOPS} shops x ${PER_SHOP} listings (${watched} watched), own interval 60 min; ${WARMUP_DAYS} days of history, then ${MEASURE_DAYS} days replayed; seed ${SEED}`
);
for (const [name, r] of [
	['fixed', fixed],
	['adaptive', adaptive]
] as const) {
	console.log(
		`${name.padEnd(8)}: restock detection delay (watched listings) median ${quantile(r.delays, 0.5).toFixed(1)} min, p90 ${quantile(r.delays, 0.9).toFixed(1)} min; ` +
			`${r.delays.length} of ${r.restocks} restocks seen, ${r.missed} missed (back and gone between polls)`
	);
	console.log(
		`${''.padEnd(8)}  requests per shop per day: ${r.requestsPerShopDay.map((n) => n.toFixed(0)).join(', ')} (total ${r.requestsPerShopDay.reduce((a, b) => a + b, 0).toFixed(0)}); ` +
			`busiest hour per shop: ${r.maxPerShopHour.join(', ')}; shortest gap between polls of one listing: ${r.minGapMinutes.toFixed(0)} min`
	);
}
const budgetShare = adaptive.requestsPerShopDay.map((n, i) => n / fixed.requestsPerShopDay[i]);
console.log(`adaptive/fixed requests per shop: ${budgetShare.map((x) => x.toFixed(2)).join(', ')}`);
console.log(
	`adaptive/fixed median delay: ${(quantile(adaptive.delays, 0.5) / quantile(fixed.delays, 0.5)).toFixed(2)}`
);
