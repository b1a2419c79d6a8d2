/**
 * Polling shop listings: claim due listings across workers, fetch politely, read offers with
 * $lib/feeds, store change points and stock events. Entry point: createPoller().
 */
export { createPoller, type Poller, type PollerOptions, type RunSummary } from './poller';
export { claimDue, mergeFeedConfig, releaseLeases, type ClaimedListing } from './claim';
export {
	recordPoll,
	recordPolls,
	type PendingPoll,
	type PollResult,
	type PollVerdict,
	type PollerTx,
	type StockEventRecord,
	type StockEventsHook
} from './record';
export { createWriteQueue, type WriteQueue } from './write-queue';
export { RobotsCache } from './robots';
export { ShopGate } from './gate';
export { fetchPage, type FetchOutcome } from './http';
export { backoffDelayMs, nextPollAfterSuccess, parseRetryAfter } from './schedule';
export { isPrivateAddress, assertFetchable } from './net';
export * from './config';
