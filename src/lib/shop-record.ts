/**
 * The shop record in words: the short line on listing rows and the shop page. Pure. The thresholds
 * are our own reading of the figures (documented on /shops/[slug]), not a published scale.
 */

const DAY = 86_400_000;

export interface ShopRecordFigures {
	medianRestockGapMs: number | null;
	delistings: number;
	listings: number;
	failedPollShare: number | null;
}

/** "within 2 weeks": the smallest plain span that holds the median restock gap. */
export function restockWithin(ms: number): string {
	if (ms <= 2 * DAY) return 'within 2 days';
	if (ms <= 7 * DAY) return 'within a week';
	if (ms <= 14 * DAY) return 'within 2 weeks';
	if (ms <= 31 * DAY) return 'within a month';
	return 'after more than a month';
}

/** How often the shop removes listings, as delistings per listing tracked in the window. */
export function delistWord(delistings: number, listings: number): string | null {
	if (listings === 0) return null;
	const rate = delistings / listings;
	if (rate < 0.1) return 'rarely';
	if (rate < 0.3) return 'now and then';
	return 'often';
}

/** "usually restocks within 2 weeks; delists rarely" (parts without data are left out); null with nothing to say. */
export function shopRecordLine(r: ShopRecordFigures): string | null {
	const parts: string[] = [];
	if (r.medianRestockGapMs !== null) parts.push(`usually restocks ${restockWithin(r.medianRestockGapMs)}`);
	const delists = delistWord(r.delistings, r.listings);
	if (delists) parts.push(`delists ${delists}`);
	if (r.failedPollShare !== null && r.failedPollShare >= 0.2) parts.push('its pages often fail to load for us');
	return parts.length ? parts.join('; ') : null;
}
