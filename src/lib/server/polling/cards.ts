/**
 * The public cards (queries/read-model.ts) after poll writes. A poll batch's changes mark their
 * converters dirty by trigger in the batch's own transaction, so no read can ever show a card older
 * than a committed change (every read rebuilds dirty cards first). Rebuilding them inside the batch
 * made every batch rebuild the cards of nearly every converter and held the dirty rows' locks while
 * doing it, so the next batch waited: the poller spent most of its first reads there. Instead the
 * poller rebuilds what is dirty after its batches commit: `minGapMs` after the first change since the
 * last rebuild, one rebuild at a time, and at the end of each drain (`flush`), so readers rarely find
 * anything to rebuild. A rebuild still makes writers of the same converters wait, hence the gap.
 */
import type { Database } from '../db/client';
import { refreshDirtyCards } from '../queries/read-model';

export interface CardRefresher {
	/** A batch that changed what cards show has committed: rebuild soon. */
	request(): void;
	/** Rebuild now if anything was requested (and wait for one running). */
	flush(): Promise<void>;
}

export const CARD_REFRESH_GAP_MS = 30_000;

export function createCardRefresher(
	db: Database,
	log: (line: string) => void,
	minGapMs = CARD_REFRESH_GAP_MS
): CardRefresher {
	let wanted = false;
	let running: Promise<void> | null = null;
	let timer: NodeJS.Timeout | null = null;

	const run = (): Promise<void> => {
		if (timer) clearTimeout(timer);
		timer = null;
		wanted = false;
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
		// Trailing: the first change waits a full gap, so a burst of batches shares one rebuild.
		timer = setTimeout(run, minGapMs);
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
