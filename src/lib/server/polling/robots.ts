/**
 * robots.txt per origin, fetched on first need and cached in this worker's memory (RFC 9309
 * section 2.4: never longer than 24 hours). Parsing and the fetch-outcome rules are the shared
 * ones in $lib/feeds (robotsFromFetch: 4xx allows all, 5xx or network error disallows all).
 */
import {
	explainAllowed,
	robotsCacheExpired,
	robotsFromFetch,
	ROBOTS_MAX_REDIRECTS,
	type RobotsRules
} from '../../feeds';
import { ROBOTS_ERROR_RETRY_MS } from './config';
import { fetchPage, type HopBlock } from './http';

interface Entry {
	rules: RobotsRules;
	/** Poller-clock ms when fetched. */
	fetchedAt: number;
}

export interface RobotsCacheOptions {
	userAgent: string;
	timeoutMs: number;
	/** Poller clock (ms): cache ages follow it so tests can step through a day. */
	now: () => number;
	/** Run the fetch through the shop's politeness gate. */
	schedule: <T>(origin: string, fn: () => Promise<T>) => Promise<T>;
	/** Private-address guard for the robots.txt URL and its redirects. */
	checkUrl: (url: URL) => Promise<HopBlock | null>;
	fetchImpl?: typeof fetch;
}

export class RobotsCache {
	private entries = new Map<string, Entry>();
	private pending = new Map<string, Promise<Entry>>();

	constructor(private opts: RobotsCacheOptions) {}

	/** Forget every cached file (a curator's "re-read robots.txt", and tests). */
	clear(): void {
		this.entries.clear();
	}

	private fresh(e: Entry | undefined): e is Entry {
		if (!e) return false;
		const now = this.opts.now();
		// An unreachable robots.txt is retried sooner; meanwhile it still disallows everything.
		if (e.rules.mode === 'disallow-all' && now - e.fetchedAt > ROBOTS_ERROR_RETRY_MS) return false;
		return !robotsCacheExpired(e.fetchedAt, now);
	}

	/** The rules for `origin` ("http://host:port"), from cache or a new fetch. */
	async rulesFor(origin: string): Promise<RobotsRules> {
		const cached = this.entries.get(origin);
		if (this.fresh(cached)) return cached.rules;
		let p = this.pending.get(origin);
		if (!p) {
			p = this.load(origin).finally(() => this.pending.delete(origin));
			this.pending.set(origin, p);
		}
		return (await p).rules;
	}

	/** May we fetch `url`? With the deciding reason for last_error. */
	async check(url: URL): Promise<{ allowed: boolean; reason: string }> {
		const rules = await this.rulesFor(url.origin);
		const verdict = explainAllowed(rules, this.opts.userAgent, url.pathname + url.search);
		return { allowed: verdict.allowed, reason: verdict.reason };
	}

	private async load(origin: string): Promise<Entry> {
		const fetchedAt = this.opts.now();
		const outcome = await this.opts.schedule(origin, () =>
			fetchPage(`${origin}/robots.txt`, {
				headers: { 'User-Agent': this.opts.userAgent, Accept: 'text/plain, */*;q=0.5' },
				timeoutMs: this.opts.timeoutMs,
				// RFC 9309 2.5 asks for at least 500 KiB; parseRobots keeps the first 512 KiB of a larger file.
				maxBytes: 2 * 1024 * 1024,
				maxRedirects: ROBOTS_MAX_REDIRECTS,
				beforeHop: this.opts.checkUrl,
				fetchImpl: this.opts.fetchImpl
			})
		);
		let rules: RobotsRules;
		switch (outcome.kind) {
			case 'response':
				rules = robotsFromFetch({ status: outcome.status, body: outcome.body, redirects: outcome.redirects });
				break;
			case 'redirects':
				rules = robotsFromFetch({ status: 310, redirects: ROBOTS_MAX_REDIRECTS + 1 });
				break;
			case 'blocked':
				rules = robotsFromFetch({ error: new Error(outcome.block.reason) });
				break;
			default:
				rules = robotsFromFetch({ error: new Error(outcome.reason) });
		}
		const entry = { rules, fetchedAt };
		this.entries.set(origin, entry);
		return entry;
	}
}
