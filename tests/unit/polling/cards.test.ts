/**
 * The poller's card refresher (src/lib/server/polling/cards.ts): a burst of committed batches shares
 * one rebuild a full gap after the first, rebuilds never overlap, a change during a rebuild gets its
 * own rebuild after it, `flush` rebuilds at once, and a failed rebuild is only logged (readers rebuild
 * dirty cards themselves). The rules are our own (DEVELOPERS.md, Polling).
 */
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';

const calls: Array<{ resolve: () => void; reject: (e: Error) => void }> = [];
vi.mock('../../../src/lib/server/queries/read-model', () => ({
	refreshDirtyCards: () => new Promise<number>((resolve, reject) => calls.push({ resolve: () => resolve(0), reject }))
}));
const { createCardRefresher } = await import('../../../src/lib/server/polling/cards');

const db = {} as never;

beforeEach(() => {
	vi.useFakeTimers();
	calls.length = 0;
});
afterEach(() => {
	vi.useRealTimers();
});

describe('createCardRefresher', () => {
	it('rebuilds once, a full gap after the first of many requests, never two at a time', async () => {
		const cards = createCardRefresher(db, () => {}, 1000);
		cards.request();
		await vi.advanceTimersByTimeAsync(600);
		cards.request();
		cards.request();
		expect(calls).toHaveLength(0);
		await vi.advanceTimersByTimeAsync(400);
		expect(calls).toHaveLength(1);
		// A change while the rebuild runs waits for it, then a full gap.
		cards.request();
		await vi.advanceTimersByTimeAsync(5000);
		expect(calls).toHaveLength(1);
		calls[0].resolve();
		await vi.advanceTimersByTimeAsync(999);
		expect(calls).toHaveLength(1);
		await vi.advanceTimersByTimeAsync(1);
		expect(calls).toHaveLength(2);
		calls[1].resolve();
		await vi.advanceTimersByTimeAsync(10_000);
		expect(calls).toHaveLength(2); // nothing more was asked
	});

	it('flush rebuilds at once when something changed, and not otherwise', async () => {
		const cards = createCardRefresher(db, () => {}, 60_000);
		const idle = cards.flush();
		await idle;
		expect(calls).toHaveLength(0);
		cards.request();
		const done = cards.flush();
		await vi.advanceTimersByTimeAsync(0);
		expect(calls).toHaveLength(1);
		calls[0].resolve();
		await done;
		await vi.advanceTimersByTimeAsync(120_000);
		expect(calls).toHaveLength(1); // the pending timer went with the flush
	});

	it('logs a failed rebuild instead of throwing', async () => {
		const lines: string[] = [];
		const cards = createCardRefresher(db, (l) => lines.push(l), 1000);
		cards.request();
		const done = cards.flush();
		await vi.advanceTimersByTimeAsync(0);
		calls[0].reject(new Error('connection ended'));
		await expect(done).resolves.toBeUndefined();
		expect(lines).toEqual([expect.stringContaining('connection ended')]);
	});
});
