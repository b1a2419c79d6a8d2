/**
 * PostgreSQL-backed rate limits: counts hold across separate connection pools (as two app
 * instances would have), windows roll over, and Retry-After is the time left in the window.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDb } from '../../src/lib/server/db/client';
import { hit, hitAll, pruneRateLimits, signInLimits, type Limit } from '../../src/lib/server/security/rate-limit';
import { freshDatabase } from './helpers/db';

let world: Awaited<ReturnType<typeof freshDatabase>>;
let other: ReturnType<typeof createDb>;

beforeAll(async () => {
	world = await freshDatabase('sg_it_rate_limit');
	other = createDb(world.url, { max: 2 });
});
afterAll(async () => {
	await other?.sql.end({ timeout: 5 });
	await world?.close();
});

const perAddress: Limit = { name: 'test-address', max: 3, windowSeconds: 600 };

describe('rate limits in PostgreSQL', () => {
	it('allows max hits per window across two instances, then refuses with the time left', async () => {
		const t0 = new Date('2026-01-01T10:00:00Z');
		const answers = [];
		for (let i = 0; i < 4; i++)
			answers.push(
				await hit(i % 2 ? other.db : world.db, perAddress, 'a@example.test', new Date(t0.getTime() + i * 1000))
			);
		expect(answers.slice(0, 3).every((a) => a.allowed)).toBe(true);
		const refused = answers[3];
		expect(refused.allowed).toBe(false);
		if (!refused.allowed) expect(refused.retryAfterSeconds).toBe(600 - 3);
		// Another subject has its own counter.
		expect((await hit(world.db, perAddress, 'b@example.test', t0)).allowed).toBe(true);
	});

	it('starts a new window once the old one has ended', async () => {
		const later = new Date('2026-01-01T10:10:00Z');
		expect((await hit(world.db, perAddress, 'a@example.test', later)).allowed).toBe(true);
	});

	it('counts concurrent hits exactly (no lost updates)', async () => {
		const limit: Limit = { name: 'test-burst', max: 20, windowSeconds: 60 };
		const at = new Date('2026-01-02T00:00:00Z');
		const answers = await Promise.all(
			Array.from({ length: 50 }, (_, i) => hit(i % 2 ? other.db : world.db, limit, 'client-1', at))
		);
		expect(answers.filter((a) => a.allowed)).toHaveLength(20);
	});

	it('hitAll refuses when any limit is spent, reporting the longest wait', async () => {
		const client: Limit = { name: 'test-client', max: 2, windowSeconds: 900 };
		const addr: Limit = { name: 'test-addr2', max: 100, windowSeconds: 60 };
		const at = new Date('2026-01-03T00:00:00Z');
		const results = [];
		for (const email of ['x@example.test', 'y@example.test', 'z@example.test'])
			results.push(
				await hitAll(
					world.db,
					[
						[addr, email],
						[client, '198.51.100.7']
					],
					at
				)
			);
		expect(results.map((r) => r.allowed)).toEqual([true, true, false]);
		const last = results[2];
		if (!last.allowed) {
			expect(last.limit.name).toBe('test-client');
			expect(last.retryAfterSeconds).toBe(900);
		}
	});

	it('housekeeping prunes counters a day after their window', async () => {
		const removed = await pruneRateLimits(world.db, new Date('2026-01-05T00:00:00Z'));
		expect(removed).toBeGreaterThanOrEqual(4);
	});

	it('reads its limits from the environment, refusing nonsense', () => {
		expect(signInLimits({}).perAddress.max).toBe(5);
		expect(signInLimits({ SIGNIN_LIMIT_PER_CLIENT: '1000' }).perClient.max).toBe(1000);
		expect(signInLimits({ SIGNIN_LIMIT_PER_CLIENT: '1e3' }).perClient.max).toBe(20);
	});
});
