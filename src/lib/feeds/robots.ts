/**
 * robots.txt per RFC 9309 ("Robots Exclusion Protocol", 2022). Pure parsing and matching; fetching
 * and caching belong to the poller, which uses `robotsFromFetch` to turn the outcome into rules.
 */

export interface RobotsRule {
	allow: boolean;
	/** The rule's path pattern as written (after percent-encoding normalisation). */
	path: string;
}

export interface RobotsGroup {
	/** User-agent values of the group, lower-cased. */
	agents: string[];
	rules: RobotsRule[];
}

export interface RobotsRules {
	/**
	 * 'parsed': rules from a fetched file; 'allow-all': the file was unavailable (RFC 9309 2.3.1.3);
	 * 'disallow-all': the file was unreachable (RFC 9309 2.3.1.4).
	 */
	mode: 'parsed' | 'allow-all' | 'disallow-all';
	groups: RobotsGroup[];
	sitemaps: string[];
	/** Why the mode is what it is, for logs and the curator's test read. */
	reason?: string;
}

/** RFC 9309 section 2.5: parse at least 500 KiB. We keep 512 Ki characters (octets for an ASCII file) and ignore the rest. */
export const ROBOTS_MAX_BYTES = 512 * 1024;
/** RFC 9309 section 2.4: do not use a cached robots.txt for more than 24 hours. */
export const ROBOTS_MAX_CACHE_MS = 24 * 60 * 60 * 1000;
/** RFC 9309 section 2.3.1.2: follow at least five consecutive redirects for robots.txt. */
export const ROBOTS_MAX_REDIRECTS = 5;

/**
 * Parse a robots.txt body into groups (RFC 9309 section 2.1/2.2). Consecutive user-agent lines
 * share one group; rules before any user-agent line, unknown keys and malformed lines are ignored,
 * as the RFC asks crawlers to be lenient.
 */
export function parseRobots(text: string): RobotsRules {
	const body = text.length > ROBOTS_MAX_BYTES ? text.slice(0, ROBOTS_MAX_BYTES) : text;
	const groups: RobotsGroup[] = [];
	const sitemaps: string[] = [];
	let current: RobotsGroup | undefined;
	// True while we are still reading the user-agent lines that open a group.
	let collectingAgents = false;
	for (const rawLine of body.replace(/^\uFEFF/, '').split(/\r\n|\r|\n/)) {
		const line = rawLine.replace(/#.*$/, '').trim();
		if (!line) continue;
		const colon = line.indexOf(':');
		if (colon < 0) continue;
		const key = line.slice(0, colon).trim().toLowerCase();
		const value = line.slice(colon + 1).trim();
		if (key === 'user-agent') {
			if (!collectingAgents || !current) {
				current = { agents: [], rules: [] };
				groups.push(current);
				collectingAgents = true;
			}
			current.agents.push(value.toLowerCase());
		} else if (key === 'allow' || key === 'disallow') {
			collectingAgents = false;
			if (!current) continue;
			// An empty path matches nothing, so "Disallow:" allows everything (RFC 9309 2.2.2).
			if (!value) continue;
			current.rules.push({ allow: key === 'allow', path: normalisePath(value) });
		} else if (key === 'sitemap') {
			// Sitemap lines stand outside groups and do not end the run of user-agent lines.
			if (value) sitemaps.push(value);
		}
	}
	return { mode: 'parsed', groups, sitemaps };
}

/**
 * The product token of a user-agent value: "ScopegradeBot/1.0 (+https://...)" -> "scopegradebot".
 * RFC 9309 2.2.1 wants the bare token, but files in the wild often carry a version.
 */
function productToken(ua: string): string {
	return ua.trim().split(/[\s/]/)[0].toLowerCase();
}

/** The rules that apply to a crawler: its own group(s) combined, else the '*' group(s) combined. */
export function rulesFor(robots: RobotsRules, userAgentToken: string): RobotsRule[] {
	const token = productToken(userAgentToken);
	const own = robots.groups.filter((g) => g.agents.some((a) => a !== '*' && productToken(a) === token));
	const chosen = own.length ? own : robots.groups.filter((g) => g.agents.includes('*'));
	return chosen.flatMap((g) => g.rules);
}

/**
 * May `userAgentToken` fetch `path`? RFC 9309 section 2.2.2: the most specific (longest) matching
 * rule wins, an allow rule wins a tie with a disallow rule, and no matching rule means allowed.
 * `path` may include a query string; a full URL is reduced to its path and query.
 */
export function isAllowed(robots: RobotsRules, userAgentToken: string, path: string): boolean {
	return explainAllowed(robots, userAgentToken, path).allowed;
}

/** Like `isAllowed`, with the deciding rule so logs can say why a fetch was skipped. */
export function explainAllowed(
	robots: RobotsRules,
	userAgentToken: string,
	path: string
): { allowed: boolean; rule?: RobotsRule; reason: string } {
	const target = normalisePath(toPathAndQuery(path));
	// RFC 9309 2.2.2: "/robots.txt" itself is always allowed.
	if (target === '/robots.txt') return { allowed: true, reason: '/robots.txt is implicitly allowed' };
	if (robots.mode === 'allow-all')
		return { allowed: true, reason: robots.reason ?? 'robots.txt unavailable: no restrictions' };
	if (robots.mode === 'disallow-all')
		return { allowed: false, reason: robots.reason ?? 'robots.txt unreachable: assume complete disallow' };
	let best: RobotsRule | undefined;
	let bestLen = -1;
	for (const rule of rulesFor(robots, userAgentToken)) {
		if (!matches(rule.path, target)) continue;
		const len = patternLength(rule.path);
		if (len > bestLen || (len === bestLen && rule.allow && best && !best.allow)) {
			best = rule;
			bestLen = len;
		}
	}
	if (!best) return { allowed: true, reason: 'no rule matches' };
	return { allowed: best.allow, rule: best, reason: `${best.allow ? 'Allow' : 'Disallow'}: ${best.path}` };
}

/** Specificity is the rule's length in octets (the pattern as written, wildcards included). */
function patternLength(pattern: string): number {
	return new TextEncoder().encode(pattern).length;
}

const regexCache = new Map<string, RegExp>();

/** '*' matches any run of characters, a final '$' anchors the end; otherwise a prefix match. */
function matches(pattern: string, target: string): boolean {
	let re = regexCache.get(pattern);
	if (!re) {
		const anchored = pattern.endsWith('$');
		const body = (anchored ? pattern.slice(0, -1) : pattern)
			.split('*')
			.map((part) => part.replace(/[.+?^${}()|[\]\\]/g, '\\$&'))
			.join('.*');
		re = new RegExp(`^${body}${anchored ? '$' : ''}`);
		if (regexCache.size > 2000) regexCache.clear();
		regexCache.set(pattern, re);
	}
	return re.test(target);
}

function toPathAndQuery(pathOrUrl: string): string {
	if (/^[a-z][a-z0-9+.-]*:\/\//i.test(pathOrUrl)) {
		try {
			const u = new URL(pathOrUrl);
			return u.pathname + u.search;
		} catch {
			return pathOrUrl;
		}
	}
	return pathOrUrl.startsWith('/') ? pathOrUrl : `/${pathOrUrl}`;
}

/**
 * Compare paths in one form (RFC 9309 2.2.2 asks for percent-encoded comparison): non-ASCII
 * characters are UTF-8 percent-encoded, escapes of unreserved characters are decoded, and the
 * remaining escapes are upper-cased, so "/caf%c3%a9", "/café" and "/caf%C3%A9" compare equal.
 */
function normalisePath(p: string): string {
	let out = '';
	for (let i = 0; i < p.length; i++) {
		const ch = p[i];
		if (ch === '%' && /^[0-9a-fA-F]{2}$/.test(p.slice(i + 1, i + 3))) {
			const hex = p.slice(i + 1, i + 3).toUpperCase();
			const c = String.fromCharCode(parseInt(hex, 16));
			out += /[A-Za-z0-9\-._~]/.test(c) ? c : `%${hex}`;
			i += 2;
		} else if (ch.charCodeAt(0) > 0x7e || ch.charCodeAt(0) < 0x21) {
			const cp = p.codePointAt(i)!;
			const s = String.fromCodePoint(cp);
			for (const b of new TextEncoder().encode(s)) out += `%${b.toString(16).toUpperCase().padStart(2, '0')}`;
			if (cp > 0xffff) i++;
		} else {
			out += ch;
		}
	}
	return out;
}

/** The outcome of fetching /robots.txt, as the poller saw it (after following redirects). */
export type RobotsFetchOutcome = { status: number; body?: string; redirects?: number } | { error: unknown };

/**
 * Rules from a robots.txt fetch outcome (RFC 9309 section 2.3.1): 2xx -> parse the body;
 * 4xx ("unavailable") -> no restrictions; 5xx or a network error ("unreachable") -> assume
 * complete disallow; more than five redirects -> treated as unavailable (the RFC allows this).
 * A 429 is a 4xx and so allows crawling by the RFC; the poller's own 429 backoff still applies.
 */
export function robotsFromFetch(outcome: RobotsFetchOutcome): RobotsRules {
	if ('error' in outcome) {
		const msg = outcome.error instanceof Error ? outcome.error.message : String(outcome.error);
		return {
			mode: 'disallow-all',
			groups: [],
			sitemaps: [],
			reason: `robots.txt unreachable (${msg}): assume complete disallow`
		};
	}
	const { status } = outcome;
	if ((outcome.redirects ?? 0) > ROBOTS_MAX_REDIRECTS || (status >= 300 && status < 400)) {
		return {
			mode: 'allow-all',
			groups: [],
			sitemaps: [],
			reason: `robots.txt redirected too often (status ${status}): treated as unavailable`
		};
	}
	if (status >= 200 && status < 300) return parseRobots(outcome.body ?? '');
	if (status >= 400 && status < 500) {
		return {
			mode: 'allow-all',
			groups: [],
			sitemaps: [],
			reason: `robots.txt answered ${status}: unavailable, no restrictions`
		};
	}
	return {
		mode: 'disallow-all',
		groups: [],
		sitemaps: [],
		reason: `robots.txt answered ${status}: unreachable, assume complete disallow`
	};
}

/** True when a robots.txt fetched at `fetchedAt` must be fetched again (RFC 9309 section 2.4). */
export function robotsCacheExpired(fetchedAt: Date | number, now: Date | number = Date.now()): boolean {
	return +now - +fetchedAt > ROBOTS_MAX_CACHE_MS;
}
