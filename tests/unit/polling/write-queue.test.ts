import { describe, expect, it } from 'vitest';
import { createWriteQueue } from '../../../src/lib/server/polling/write-queue';
import type { PendingPoll, PollResult } from '../../../src/lib/server/polling/record';

const item = (listingId: number): PendingPoll => ({
	c: { listingId } as PendingPoll['c'],
	verdict: { kind: 'not_modified', detail: '' },
	now: new Date(0)
});
const result = (p: PendingPoll): PollResult => ({
	listingId: p.c.listingId,
	shopId: 1,
	outcome: 'not_modified',
	at: p.now,
	detail: '',
	changed: false,
	events: []
});

/** A writer whose batches finish when the test says so. */
function manualWriter() {
	const calls: Array<{ ids: number[]; finish: () => void }> = [];
	let active = 0;
	let maxActive = 0;
	const write = (batch: PendingPoll[]) =>
		new Promise<PollResult[]>((resolve) => {
			active++;
			maxActive = Math.max(maxActive, active);
			calls.push({ ids: batch.map((b) => b.c.listingId), finish: () => (active--, resolve(batch.map(result))) });
		});
	return { calls, write, maxActive: () => maxActive };
}
const tick = () => new Promise((r) => setTimeout(r, 0));

describe('createWriteQueue (group commit)', () => {
	it('writes the first poll at once and gathers what arrives meanwhile, with at most `writers` batches in flight', async () => {
		const w = manualWriter();
		const q = createWriteQueue(w.write, 100, 2);
		const first = q.push(item(1));
		await tick();
		expect(w.calls.map((c) => c.ids)).toEqual([[1]]);
		const second = q.push(item(2));
		await tick();
		const rest = [3, 4, 5].map((id) => q.push(item(id)));
		await tick();
		expect(w.calls.map((c) => c.ids)).toEqual([[1], [2]]); // two writers busy: 3, 4, 5 wait together
		w.calls[0].finish();
		await tick();
		expect(w.calls.map((c) => c.ids)).toEqual([[1], [2], [3, 4, 5]]);
		w.calls[1].finish();
		w.calls[2].finish();
		expect((await first).listingId).toBe(1);
		expect((await second).listingId).toBe(2);
		expect((await Promise.all(rest)).map((r) => r.listingId)).toEqual([3, 4, 5]);
		expect(w.maxActive()).toBe(2);
	});

	it('never puts one listing in two batches at once, and caps the batch size', async () => {
		const w = manualWriter();
		const q = createWriteQueue(w.write, 2, 2);
		const ps = [1, 1, 2, 3].map((id) => q.push(item(id)));
		await tick();
		expect(w.calls.map((c) => c.ids)).toEqual([[1, 2], [3]]);
		w.calls[0].finish();
		await tick();
		expect(w.calls[2].ids).toEqual([1]);
		w.calls[1].finish();
		w.calls[2].finish();
		await Promise.all(ps);
		await q.idle();
	});

	it("hands a failed batch's error to each of its polls", async () => {
		const q = createWriteQueue(async () => Promise.reject(new Error('db away')));
		await expect(q.push(item(7))).rejects.toThrow('db away');
	});
});
