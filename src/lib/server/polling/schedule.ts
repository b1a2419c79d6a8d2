/**
 * When to poll next: the listing's interval after a success, exponential backoff after failures,
 * and Retry-After (RFC 9110 section 10.2.3) after a 429 or 503. Pure functions of their inputs.
 */
import { BACKOFF_JITTER, INTERVAL_JITTER, MAX_BACKOFF_MS, MAX_RETRY_AFTER_MS } from './config';

/** Spread `ms` by +/- `share` using `random()` in [0, 1); random() = 0.5 gives exactly `ms`. */
function jitter(ms: number, share: number, random: () => number): number {
	return Math.round(ms * (1 + share * (2 * random() - 1)));
}

/** Next poll after a successful check: the listing's interval, lightly jittered. */
export function nextPollAfterSuccess(now: Date, intervalMinutes: number, random: () => number = Math.random): Date {
	return new Date(now.getTime() + jitter(intervalMinutes * 60_000, INTERVAL_JITTER, random));
}

/**
 * Delay before the next try after `failures` consecutive failures (1 after the first):
 * interval x 2^failures, capped at max(MAX_BACKOFF_MS, interval), with +/- 20 % jitter.
 */
export function backoffDelayMs(intervalMinutes: number, failures: number, random: () => number = Math.random): number {
	const interval = intervalMinutes * 60_000;
	const cap = Math.max(MAX_BACKOFF_MS, interval);
	// 2^20 already dwarfs any cap; stop there so the number stays finite.
	const raw = interval * 2 ** Math.min(Math.max(failures, 0), 20);
	return jitter(Math.min(raw, cap), BACKOFF_JITTER, random);
}

/**
 * Read a Retry-After header: delay-seconds or an HTTP-date. Returns the instant before which we
 * must not ask again, on the poller's clock (`now`), or null when the value is missing or invalid.
 * An HTTP-date is measured against the response's own Date header when there is one, so a shop
 * whose clock runs off (or a test's injected clock) still gets the wait it asked for.
 */
export function parseRetryAfter(
	value: string | null | undefined,
	now: Date,
	serverDate?: string | null,
	realNow: number = Date.now()
): Date | null {
	if (!value) return null;
	const v = value.trim();
	let waitMs: number;
	if (/^\d+$/.test(v)) {
		waitMs = Number(v) * 1000;
	} else {
		// An HTTP-date always names its month ("Wed, 21 Oct 2015 07:28:00 GMT"); Date.parse alone
		// would also accept things like "-5" as a year.
		if (!/[A-Za-z]{3}/.test(v)) return null;
		const at = Date.parse(v);
		if (Number.isNaN(at)) return null;
		const ref = serverDate ? Date.parse(serverDate) : NaN;
		waitMs = at - (Number.isNaN(ref) ? realNow : ref);
	}
	waitMs = Math.min(Math.max(waitMs, 0), MAX_RETRY_AFTER_MS);
	return new Date(now.getTime() + waitMs);
}
