/**
 * Group commit for poll results: polls hand their verdicts here and wait; at most `writers` batches
 * are written at a time, and whatever arrives meanwhile goes into the next one. With little traffic
 * a poll is written at once (a batch of one); under load the batches grow by themselves, so the
 * database work per poll falls as the poll rate rises. Two writers let one batch commit while the
 * next is prepared; batches lock disjoint listings and take shared rows (poll_count) in key order.
 */
import type { PendingPoll, PollResult } from './record';

export interface WriteQueue {
	/** Queue one poll's verdict; resolves with its stored result. */
	push(item: PendingPoll): Promise<PollResult>;
	/** Resolves when nothing is queued or being written. */
	idle(): Promise<void>;
}

export function createWriteQueue(
	write: (batch: PendingPoll[]) => Promise<PollResult[]>,
	maxBatch = 100,
	writers = 2
): WriteQueue {
	let queue: Array<{ item: PendingPoll; done: (r: PollResult) => void; fail: (e: unknown) => void }> = [];
	const writing = new Set<Promise<void>>();
	/** Listings in a batch being written: a second verdict for one waits until that batch is done. */
	const busy = new Set<number>();

	const next = () => {
		if (writing.size >= writers || !queue.length) return;
		// A listing appears once per batch and in one batch at a time: a second verdict for it (a rare
		// "poll now" right after a poll) waits, so its write sees the first one's result.
		const seen = new Set<number>();
		const batch: typeof queue = [];
		const rest: typeof queue = [];
		for (const q of queue) {
			const id = q.item.c.listingId;
			if (batch.length < maxBatch && !seen.has(id) && !busy.has(id)) {
				seen.add(id);
				batch.push(q);
			} else rest.push(q);
		}
		if (!batch.length) return;
		queue = rest;
		for (const id of seen) busy.add(id);
		const p: Promise<void> = write(batch.map((b) => b.item))
			.then(
				(results) => batch.forEach((b, i) => b.done(results[i])),
				(err) => batch.forEach((b) => b.fail(err))
			)
			.finally(() => {
				writing.delete(p);
				for (const id of seen) busy.delete(id);
				next();
			});
		writing.add(p);
	};

	return {
		push(item) {
			return new Promise<PollResult>((done, fail) => {
				queue.push({ item, done, fail });
				// Let polls finishing in the same turn of the event loop join this batch.
				queueMicrotask(next);
			});
		},
		async idle() {
			while (writing.size) await Promise.race(writing);
		}
	};
}
