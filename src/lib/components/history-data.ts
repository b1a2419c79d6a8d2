/**
 * Normalises a GET /api/v1/listings/[id]/history answer ({ points: [{ at, priceMinor,
 * currency, stock }] }) into the chart's shape, tolerating a bare array and a few field
 * spellings so the chart does not break if the route's shape grows.
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
