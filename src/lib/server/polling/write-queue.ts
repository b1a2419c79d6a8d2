/**
 * Group commit for poll results: polls hand their verdicts here and wait; one batch is written at a
 * time, and whatever arrives while it is being written goes into the next one. With little traffic a
 * poll is written at once (a batch of one); under load the batches grow by themselves, so the
 * database work per poll falls as the poll rate rises.
 */
import type { PendingPoll, PollResult } from './record';

export interface WriteQueue {
	/** Queue one poll's verdict; resolves with its stored result. */
	push(item: PendingPoll): Promise<PollResult>;
	/** Resolves when nothing is queued or being written. */
	idle(): Promise<void>;
}

export function createWriteQueue(write: (batch: PendingPoll[]) => Promise<PollResult[]>, maxBatch = 100): WriteQueue {
	let queue: Array<{ item: PendingPoll; done: (r: PollResult) => void; fail: (e: unknown) => void }> = [];
	let writing: Promise<void> | null = null;

	const next = () => {
		if (writing || !queue.length) return;
		// A listing appears once per batch: a second verdict for it (a rare "poll now" right after a
		// poll) waits for the next batch, so its write sees the first one's result.
		const seen = new Set<number>();
		const batch: typeof queue = [];
		const rest: typeof queue = [];
		for (const q of queue) {
			if (batch.length < maxBatch && !seen.has(q.item.c.listingId)) {
				seen.add(q.item.c.listingId);
				batch.push(q);
			} else rest.push(q);
		}
		queue = rest;
		writing = write(batch.map((b) => b.item))
			.then(
				(results) => batch.forEach((b, i) => b.done(results[i])),
				(err) => batch.forEach((b) => b.fail(err))
			)
			.finally(() => {
				writing = null;
				next();
			});
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
			while (writing || queue.length) await (writing ?? Promise.resolve());
		}
	};
}
