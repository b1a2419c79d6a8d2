/**
 * Every curator and admin change writes an audit row with who, what, before and after, in
 * the same transaction; the audit browser filters and pages them. Also: slugs stay fixed
 * on edit, an admin cannot drop their own admin role, verified teardowns are queryable.
 */
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as t from '../../src/lib/server/db/schema';
import { addRate, changeRole, createShop, updateShop } from '../../src/lib/server/admin';
import { browseAudit } from '../../src/lib/server/curate/audit-log';
import {
	createChip,
	createConverter,
	createRevision,
	setConverterRetired,
	updateChip,
	updateConverter,
	updateRevision
} from '../../src/lib/server/curate/catalogue';
import {
	createGuide,
	renderGuideMarkdown,
	savePick,
	setGuideStatus,
	updateGuide
} from '../../src/lib/server/curate/guides';
import { createListing, requestPoll } from '../../src/lib/server/curate/listings';
import { reviewTeardown, submitTeardown, verifiedTeardowns } from '../../src/lib/server/curate/teardowns';
import { auditRows, curateWorld } from './helpers/curate-world';

let w: Awaited<ReturnType<typeof curateWorld>>;
beforeAll(async () => {
	w = await curateWorld('curate_audit');
});
afterAll(async () => w?.close());

const converterInput = {
	brand: 'Auditbrand',
	model: 'Lamp 1',
	slug: '',
	summary: '',
	hasAudioOut: false,
	power: 'usb-bus' as const,
	outputs: ['vga' as const]
};

describe('catalogue edits', () => {
	it('converter create, edit and retire each leave a row with before and after; the slug stays', async () => {
		const c = await createConverter(w.db, w.curator, converterInput);
		expect(c.slug).toBe('auditbrand-lamp-1');
		await updateConverter(w.db, w.curator, c.id, {
			...converterInput,
			model: 'Lamp 1 Plus',
			slug: 'sneaky-new-slug',
			hasAudioOut: true
		});
		await setConverterRetired(w.db, w.curator, c.id, true, 'Discontinued everywhere');
		const [after] = await w.db.select().from(t.converters).where(eq(t.converters.id, c.id));
		expect(after.slug).toBe('auditbrand-lamp-1');
		const rows = await auditRows(w.db, 'converter');
		expect(rows.map((r) => r.action)).toEqual(['created', 'updated', 'retired']);
		expect(rows.every((r) => r.actorId === w.curator.id && r.entityId === String(c.id))).toBe(true);
		expect(rows[1].before).toMatchObject({ model: 'Lamp 1', hasAudioOut: false });
		expect(rows[1].after).toMatchObject({ model: 'Lamp 1 Plus', hasAudioOut: true, slug: 'auditbrand-lamp-1' });
		expect(rows[2].reason).toBe('Discontinued everywhere');
	});

	it('a taken slug or brand+model is a field error and writes nothing', async () => {
		const before = (await auditRows(w.db, 'converter')).length;
		await expect(
			createConverter(w.db, w.curator, { ...converterInput, model: 'Other', slug: 'auditbrand-lamp-1' })
		).rejects.toMatchObject({ field: 'slug' });
		await expect(createConverter(w.db, w.curator, { ...converterInput, model: 'Lamp 1 Plus' })).rejects.toMatchObject({
			field: 'model'
		});
		expect(await auditRows(w.db, 'converter')).toHaveLength(before);
	});

	it('chips and revisions are audited too', async () => {
		const chip = await createChip(w.db, w.curator, { name: 'AU-7', maker: 'Audit Silicon', slug: '', notes: '' });
		await updateChip(w.db, w.curator, chip.id, { name: 'AU-7', maker: 'Audit Silicon', slug: '', notes: 'Runs cool.' });
		const conv = await createConverter(w.db, w.curator, { ...converterInput, model: 'Lamp 2' });
		const rev = await createRevision(w.db, w.curator, {
			converterId: conv.id,
			code: 'A',
			chipId: chip.id,
			boardMarking: '',
			seenFrom: '2024-02-01',
			seenTo: '',
			notes: ''
		});
		await updateRevision(w.db, w.curator, rev.id, {
			converterId: conv.id,
			code: 'A',
			chipId: chip.id,
			boardMarking: 'AU-REV-1',
			seenFrom: '2024-02-01',
			seenTo: '2024-09-30',
			notes: ''
		});
		expect((await auditRows(w.db, 'chip')).map((r) => r.action)).toEqual(['created', 'updated']);
		const revRows = await auditRows(w.db, 'revision');
		expect(revRows.map((r) => r.action)).toEqual(['created', 'updated']);
		expect(revRows[1].after).toMatchObject({ boardMarking: 'AU-REV-1', seenTo: '2024-09-30' });
	});
});

describe('admin edits', () => {
	it('a role change is audited with its reason; an admin cannot remove their own admin role', async () => {
		await changeRole(w.db, w.admin, { userId: w.member.id, role: 'curator', reason: 'Runs a bench at home' });
		const [row] = await auditRows(w.db, 'user');
		expect(row).toMatchObject({
			action: 'role-changed',
			actorId: w.admin.id,
			entityId: w.member.id,
			reason: 'Runs a bench at home'
		});
		expect(row.before).toMatchObject({ role: 'member' });
		expect(row.after).toMatchObject({ role: 'curator' });
		await expect(
			changeRole(w.db, w.admin, { userId: w.admin.id, role: 'member', reason: 'oops' })
		).rejects.toMatchObject({ status: 403 });
		await expect(
			changeRole(w.db, w.curator, { userId: w.other.id, role: 'admin', reason: 'sure' })
		).rejects.toMatchObject({ status: 403 });
		const [adminRow] = await w.db.select().from(t.users).where(eq(t.users.id, w.admin.id));
		expect(adminRow.role).toBe('admin');
		expect(await auditRows(w.db, 'user')).toHaveLength(1);
	});

	it('shops and rates are audited', async () => {
		const shopInput = {
			name: 'Audit Wares',
			slug: '',
			region: 'eu' as const,
			currency: 'EUR',
			baseUrl: 'http://127.0.0.1:4998/',
			defaultFormat: 'jsonld' as const,
			maxConcurrency: 2,
			minSpacingMs: 500,
			feedConfig: '',
			shipsTo: ['eu' as const],
			active: true
		};
		const shop = await createShop(w.db, w.admin, shopInput);
		await updateShop(w.db, w.admin, shop.id, { ...shopInput, minSpacingMs: 2000 });
		await addRate(w.db, w.admin, { base: 'EUR', quote: 'JPY', day: '2025-01-02', rate: 161.5 });
		await addRate(w.db, w.admin, { base: 'EUR', quote: 'JPY', day: '2025-01-02', rate: 162 });
		const shopRows = await auditRows(w.db, 'shop');
		expect(shopRows.map((r) => r.action)).toEqual(['created', 'updated']);
		expect(shopRows[1].after).toMatchObject({ minSpacingMs: 2000, baseUrl: 'http://127.0.0.1:4998' });
		const rateRows = await auditRows(w.db, 'exchange_rate');
		expect(rateRows.map((r) => r.action)).toEqual(['created', 'updated']);
		expect(rateRows[1].before).toMatchObject({ rate: '161.50000000' });
	});
});

describe('listings, guides, teardowns', () => {
	it('listing creation and poll requests are audited; poll now sets next_poll_at', async () => {
		const [shop] = await w.db.select().from(t.shops).where(eq(t.shops.slug, 'audit-wares'));
		const [conv] = await w.db.select().from(t.converters).where(eq(t.converters.slug, 'auditbrand-lamp-2'));
		const l = await createListing(
			w.db,
			w.curator,
			{
				shopId: shop.id,
				converterId: conv.id,
				url: 'http://127.0.0.1:4998/p/lamp-2',
				format: 'jsonld',
				pollIntervalMinutes: 30,
				feedConfig: ''
			},
			{ allowPrivate: true }
		);
		const now = new Date('2030-01-01T00:00:00Z');
		await requestPoll(w.db, w.curator, l.id, now);
		const [state] = await w.db.select().from(t.listingStates).where(eq(t.listingStates.listingId, l.id));
		expect(state.nextPollAt.toISOString()).toBe(now.toISOString());
		expect(state.pollRequestedAt?.toISOString()).toBe(now.toISOString());
		expect((await auditRows(w.db, 'listing')).map((r) => r.action)).toEqual(['created', 'poll-requested']);
	});

	it('guide edits, publishing and picks are audited; markdown is sanitised', async () => {
		const g = await createGuide(w.db, w.curator, {
			title: 'Quiet picks for a studio monitor',
			slug: '',
			summary: '',
			bodyMarkdown: ''
		});
		await expect(setGuideStatus(w.db, w.curator, g.id, 'published')).rejects.toMatchObject({ field: 'bodyMarkdown' });
		await updateGuide(w.db, w.curator, g.id, {
			title: g.title,
			slug: '',
			summary: 'Two boxes',
			bodyMarkdown: '## Why\n\nSee <script>alert(1)</script> [the scale](javascript:alert(1)).'
		});
		const [conv] = await w.db.select().from(t.converters).where(eq(t.converters.slug, 'auditbrand-lamp-2'));
		await savePick(w.db, w.curator, g.id, { converterId: conv.id, note: 'Audio out', position: 0 });
		await setGuideStatus(w.db, w.curator, g.id, 'published');
		expect((await auditRows(w.db, 'guide')).map((r) => r.action)).toEqual([
			'created',
			'updated',
			'pick-added',
			'published'
		]);
		const html = renderGuideMarkdown(
			'## Why\n\nSee <script>alert(1)</script> [x](javascript:alert(1)) <img src=x onerror=alert(1)>'
		);
		expect(html).toContain('<h2>Why</h2>');
		expect(html).not.toMatch(/script|javascript:|onerror/);
	});

	it('verified teardowns are audited and queryable by converter, revision and shop', async () => {
		const [conv] = await w.db.select().from(t.converters).where(eq(t.converters.slug, 'auditbrand-lamp-2'));
		const [rev] = await w.db.select().from(t.revisions).where(eq(t.revisions.converterId, conv.id));
		const [shop] = await w.db.select().from(t.shops).where(eq(t.shops.slug, 'audit-wares'));
		const base = {
			converterId: conv.id,
			revisionId: undefined,
			shopId: shop.id,
			shopNameOther: '',
			purchaseMonth: '2025-03',
			chipId: rev.chipId,
			chipText: '',
			boardMarking: '',
			notes: '',
			photoFileId: ''
		};
		const a = await submitTeardown(w.db, w.other, base);
		const b = await submitTeardown(w.db, w.other, { ...base, purchaseMonth: '2025-04' });
		await reviewTeardown(w.db, w.curator, { id: a.id, decision: 'verify', reason: 'Chip legible', revisionId: rev.id });
		await reviewTeardown(w.db, w.curator, { id: b.id, decision: 'reject', reason: 'Photo is of another board' });
		const verified = await verifiedTeardowns(w.db, { converterId: conv.id });
		expect(verified.map((r) => r.id)).toEqual([a.id]);
		expect(verified[0]).toMatchObject({ revisionId: rev.id, shopId: shop.id, purchaseMonth: '2025-03-01' });
		expect(await verifiedTeardowns(w.db, { revisionId: rev.id })).toHaveLength(1);
		expect(await verifiedTeardowns(w.db, { shopId: shop.id + 999 })).toHaveLength(0);
		const rows = await auditRows(w.db, 'teardown_report');
		expect(rows.map((r) => r.action)).toEqual(['submitted', 'submitted', 'verified', 'rejected']);
	});
});

describe('browsing the log', () => {
	it('filters by entity and actor and pages', async () => {
		const all = await browseAudit(w.db);
		expect(all.total).toBeGreaterThan(15);
		expect(all.rows[0].at.getTime()).toBeGreaterThanOrEqual(all.rows.at(-1)!.at.getTime());
		const shops = await browseAudit(w.db, { entity: 'shop' });
		expect(shops.rows.every((r) => r.entity === 'shop')).toBe(true);
		expect(shops.total).toBe(2);
		const byAdmin = await browseAudit(w.db, { actor: 'adm@' });
		expect(byAdmin.rows.every((r) => r.actorEmail === 'adm@example.test')).toBe(true);
		expect(byAdmin.total).toBe(5);
		expect(all.entities).toEqual(expect.arrayContaining(['converter', 'guide', 'user']));
		const far = await browseAudit(w.db, { page: 99 });
		expect(far.rows).toHaveLength(0);
	});
});
