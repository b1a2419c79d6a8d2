/**
 * Member time: quiet hours and the daily digest hour, in the member's IANA time zone.
 * Pure; uses Intl only.
 */

/** True when `tz` is a time zone this runtime knows (IANA names, plus "UTC"). */
export function isTimeZone(tz: string): boolean {
	if (!tz || tz.length > 64) return false;
	try {
		new Intl.DateTimeFormat('en-GB', { timeZone: tz });
		return true;
	} catch {
		return false;
	}
}

/** Local wall-clock parts of an instant in a time zone. */
export function localParts(at: Date, tz: string) {
	const parts = new Intl.DateTimeFormat('en-GB', {
		timeZone: tz,
		hourCycle: 'h23',
		year: 'numeric',
		month: '2-digit',
		day: '2-digit',
		hour: '2-digit',
		minute: '2-digit',
		second: '2-digit'
	}).formatToParts(at);
	const get = (type: string) => Number(parts.find((p) => p.type === type)?.value ?? 0);
	const date = `${parts.find((p) => p.type === 'year')?.value}-${parts.find((p) => p.type === 'month')?.value}-${parts.find((p) => p.type === 'day')?.value}`;
	return { date, hour: get('hour') % 24, minute: get('minute'), second: get('second') };
}

export interface QuietHours {
	quietFrom: number | null;
	quietTo: number | null;
	timezone: string;
}

/** Is hour h inside [from, to), wrapping past midnight (22 -> 7)? Equal bounds mean no quiet hours. */
export function inQuietWindow(h: number, from: number, to: number): boolean {
	if (from === to) return false;
	return from < to ? h >= from && h < to : h >= from || h < to;
}

/**
 * When quiet hours hold at `now`, the instant they end (the start of hour `quietTo` local time);
 * otherwise null. Steps hour by hour, so daylight-saving jumps land on the right instant.
 */
export function quietUntil(now: Date, prefs: QuietHours | null | undefined): Date | null {
	if (!prefs || prefs.quietFrom == null || prefs.quietTo == null) return null;
	const tz = isTimeZone(prefs.timezone) ? prefs.timezone : 'UTC';
	const here = localParts(now, tz);
	if (!inQuietWindow(here.hour, prefs.quietFrom, prefs.quietTo)) return null;
	// Back to the top of the current local hour, then forward until the window is left.
	let t = now.getTime() - (here.minute * 60 + here.second) * 1000 - now.getMilliseconds();
	for (let i = 0; i < 26; i++) {
		t += 3_600_000;
		if (!inQuietWindow(localParts(new Date(t), tz).hour, prefs.quietFrom, prefs.quietTo)) return new Date(t);
	}
	return null;
}
