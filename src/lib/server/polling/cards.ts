/**
 * The public cards (queries/read-model.ts) after poll writes. A poll batch's changes mark their
 * converters dirty by trigger in the batch's own transaction, so no read can ever show a card older
 * than a committed change (every read rebuilds dirty cards first). Rebuilding them inside the batch
 * made every batch rebuild the cards of nearly every converter and held the dirty rows' locks while
 * doing it, so the next batch waited: the poller spent most of its first reads there. Instead the
 * poller rebuilds what is dirty after its batches commit, at most once per `minGapMs`, one rebuild at
 * a time, so readers rarely find anything to rebuild.
 */
import type { Database } from '../db/client';
import { refreshDirtyCards } from '../queries/read-model';

export interface CardRefresher {
	/** A batch that changed what cards show has committed: rebuild soon. */
	request(): void;
	/** Rebuild now if anything was requested (and wait for one running). */
	flush(): Promise<void>;
}

export const CARD_REFRESH_GAP_MS = 10_000;

export function createCardRefresher(
	db: Database,
	log: (line: string) => void,
	minGapMs = CARD_REFRESH_GAP_MS
): CardRefresher {
	let wanted = false;
	let running: Promise<void> | null = null;
	let timer: NodeJS.Timeout | null = null;
	let lastStart = -Infinity;

	const run = (): Promise<void> => {
		if (timer) clearTimeout(timer);
		timer = null;
		wanted = false;
		lastStart = performance.now();
		running = refreshDirtyCards(db)
			.then(
				() => {},
				(err) => log(`poller: card refresh failed (readers rebuild dirty cards themselves): ${err}`)
			)
			.finally(() => {
				running = null;
				if (wanted) schedule();
			});
		return running;
	};

	const schedule = () => {
		if (running || timer) return;
		const wait = Math.max(0, lastStart + minGapMs - performance.now());
		timer = setTimeout(run, wait);
		timer.unref?.();
	};

	return {
		request() {
			wanted = true;
			schedule();
		},
		async flush() {
			if (running) await running;
			if (wanted) await run();
		}
	};
}
