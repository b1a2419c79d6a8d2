/** Rendering an alert once per view for a whole fan-out gives each watcher the same message as rendering it alone. */
import { describe, expect, it } from 'vitest';
import { buildAlertMail } from '../../../src/lib/server/alerts/sender';
import type { OutboxContext } from '../../../src/lib/server/alerts/view';
import type { RenderedMessage } from '../../../src/lib/server/alerts/message';

const view: OutboxContext['view'] = {
	kind: 'restock',
	at: new Date('2026-03-01T10:00:00Z'),
	converter: { slug: 'vantacove-beam-bridge', brand: 'Vantacove', model: 'Beam Bridge <b>' },
	shop: { name: 'Northbay & Co', region: 'na', shipsTo: ['na'] },
	priceMinor: 2499,
	currency: 'USD',
	converted: null,
	band: 'close',
	revisionCode: 'B',
	finding: 'Black sits 2 mV high.',
	previousRunMs: 30 * 3_600_000,
	buyUrl: 'http://127.0.0.1:4311/products/beam-bridge?a=1&b=2',
	converterUrl: 'http://127.0.0.1:4300/converters/vantacove-beam-bridge'
};
const ctx = (watchId: number): OutboxContext => ({
	outboxId: watchId,
	attempts: 1,
	messageId: `<m${watchId}@x>`,
	mode: 'instant',
	watchId,
	userId: 'u',
	email: `w${watchId}@example.test`,
	paused: false,
	eventId: 1,
	listingId: 1,
	soldOutSince: null,
	quiet: null,
	view
});
const opts = {
	baseUrl: 'http://127.0.0.1:4300',
	secret: 'test-secret-0123456789abcdef',
	smtp: { host: 'x', port: 25, secure: false, from: 'Scopegrade <alerts@scopegrade.test>' }
};

describe('buildAlertMail with a shared rendering', () => {
	it('matches the one-off rendering for every watcher, unsubscribe link included', () => {
		const cache = new Map<string, RenderedMessage>();
		for (const id of [11, 12, 13]) {
			const shared = buildAlertMail(ctx(id), opts, cache);
			const alone = buildAlertMail(ctx(id), opts);
			expect(shared).toEqual(alone);
			expect(shared.html).toContain(`/unsubscribe/w${id}.`);
			expect(shared.text).toContain(`/unsubscribe/w${id}.`);
		}
		expect(cache.size).toBe(1);
	});
});
