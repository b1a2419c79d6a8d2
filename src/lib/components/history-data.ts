/**
 * Normalises a listing-history answer into one shape for the chart. The poller's
 * /api/v1/listings/[id]/history and the guide's own fallback route may name fields
 * differently; this accepts both (points as { at | observedAt | t, priceMinor | price_minor,
 * currency, stock | state }).
 */
export interface ChartPoint {
	t: number;
	priceMinor: number | null;
	currency: string | null;
	stock: string;
}

export function normaliseHistory(body: unknown): ChartPoint[] {
	const list: unknown[] = Array.isArray(body)
		? body
		: Array.isArray((body as { points?: unknown[] })?.points)
			? (body as { points: unknown[] }).points
			: Array.isArray((body as { history?: unknown[] })?.history)
				? (body as { history: unknown[] }).history
				: [];
	const out: ChartPoint[] = [];
	for (const raw of list) {
		const p = raw as Record<string, unknown>;
		const when = p.at ?? p.observedAt ?? p.observed_at ?? p.t ?? p.time;
		const t = typeof when === 'number' ? when : Date.parse(String(when));
		if (!Number.isFinite(t)) continue;
		const price = p.priceMinor ?? p.price_minor ?? p.price ?? null;
		out.push({
			t,
			priceMinor: typeof price === 'number' ? price : price == null ? null : Number(price),
			currency: (p.currency as string | null) ?? null,
			stock: String(p.stock ?? p.state ?? 'unknown')
		});
	}
	return out.sort((a, b) => a.t - b.t);
}
