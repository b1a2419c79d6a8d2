/**
 * Per-shop politeness inside one worker: at most `maxConcurrency` requests in flight to a shop,
 * and request starts at least `minSpacingMs` apart. Across workers the claim query keeps each shop
 * with one worker at a time (see claim.ts), so this in-memory gate is the shop's only gate.
 * Uses real time: spacing protects the shop's servers, whatever clock the poller's records use.
 */

interface ShopLane {
	active: number;
	/** performance.now() before which the next request may not start. */
	nextStartAt: number;
	queue: Array<() => void>;
	timer?: NodeJS.Timeout;
}

export interface GateLimits {
	maxConcurrency: number;
	minSpacingMs: number;
}

export class ShopGate {
	private lanes = new Map<number | string, ShopLane>();

	private lane(shopId: number | string): ShopLane {
		let l = this.lanes.get(shopId);
		if (!l) {
			l = { active: 0, nextStartAt: 0, queue: [] };
			this.lanes.set(shopId, l);
		}
		return l;
	}

	/**
	 * Wait for a slot at `shopId`, run `fn`, free the slot. Waiters are served in arrival order.
	 */
	async run<T>(shopId: number | string, limits: GateLimits, fn: () => Promise<T>): Promise<T> {
		const lane = this.lane(shopId);
		await new Promise<void>((ready) => {
			lane.queue.push(ready);
			this.pump(lane, limits);
		});
		try {
			return await fn();
		} finally {
			lane.active--;
			this.pump(lane, limits);
		}
	}

	private pump(lane: ShopLane, limits: GateLimits) {
		if (lane.timer) return;
		while (lane.queue.length && lane.active < Math.max(1, limits.maxConcurrency)) {
			const wait = lane.nextStartAt - performance.now();
			if (wait > 0) {
				lane.timer = setTimeout(() => {
					lane.timer = undefined;
					this.pump(lane, limits);
				}, Math.ceil(wait));
				return;
			}
			lane.active++;
			lane.nextStartAt = performance.now() + Math.max(0, limits.minSpacingMs);
			lane.queue.shift()!();
		}
	}

	/** Requests in flight per shop (for logs and tests). */
	inFlight(shopId: number | string): number {
		return this.lanes.get(shopId)?.active ?? 0;
	}
}
