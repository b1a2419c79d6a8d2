/**
 * The daily digest: members in digest mode get their alerts (restocks and price drops) gathered
 * into one message a day, at their digest hour in their time zone. The job looks every hour;
 * each member's digest goes once per local day, and an empty digest is never sent.
 *
 * Delivery follows the sender's rules: rows are claimed with a lease, sent as one message with
 * a stable Message-ID per member and local day, then marked; at least once, as in sender.ts.
 */
import { randomUUID } from 'node:crypto';
import { sql } from 'drizzle-orm';
import { loadRates } from '../queries/offers';
import type { Database } from '../db/client';
import { rowsOf, type Db } from './db';
import { renderDigestMessage, unsubscribeHeaders, unsubscribeUrl } from './message';
import { localParts } from './schedule';
import {
	backoffMs,
	claimDue,
	createAlertTransport,
	DEFAULT_MAX_ATTEMPTS,
	mailDomain,
	settle,
	type SenderOptions
} from './sender';
import { signUnsubscribeToken } from './token';
import { loadOutboxContexts } from './view';

export interface DigestReport {
	members: number;
	sent: number;
	items: number;
	skippedEmpty: number;
	failed: number;
	notYet: number;
}

/** Members with digest rows waiting, with their digest hour and time zone. */
async function membersWaiting(db: Db) {
	return rowsOf<{ user_id: string; timezone: string | null; digest_hour: number | null }>(
		await db.execute(sql`
			select distinct o.user_id, mp.timezone, mp.digest_hour
			from alert_outbox o left join member_pref mp on mp.user_id = o.user_id
			where o.mode = 'digest' and (o.status = 'pending' or (o.status = 'sending' and o.lease_until < now()))`)
	);
}

/** Build and send every digest that is due now. */
export async function sendDigests(db: Db, options: SenderOptions & { now?: Date }): Promise<DigestReport> {
	const now = options.now ?? new Date();
	const owner = options.owner ?? `digest-${process.pid}-${randomUUID().slice(0, 8)}`;
	const report: DigestReport = { members: 0, sent: 0, items: 0, skippedEmpty: 0, failed: 0, notYet: 0 };
	const waiting = await membersWaiting(db);
	if (waiting.length === 0) return report;
	const rates = await loadRates(db as unknown as Database);
	const domain = mailDomain(options.smtp.from);
	const base = options.baseUrl.replace(/\/+$/, '');
	const transport = options.transport ?? createAlertTransport(options.smtp, 1);
	const maxAttempts = options.maxAttempts ?? DEFAULT_MAX_ATTEMPTS;
	try {
		for (const m of waiting) {
			const tz = m.timezone ?? 'UTC';
			const local = localParts(now, tz);
			if (local.hour < (m.digest_hour ?? 8)) {
				report.notYet++;
				continue;
			}
			const key = `${m.user_id}:${local.date}`;
			const [already] = rowsOf<{ n: number }>(
				await db.execute(sql`select count(*)::int as n from alert_outbox where digest_key = ${key} and status = 'sent'`)
			);
			if (Number(already?.n ?? 0) > 0) {
				report.notYet++; // today's digest went out; the rest waits for tomorrow's
				continue;
			}
			const ids = await claimDue(db, {
				owner,
				limit: 500,
				leaseMs: options.leaseMs ?? 300_000,
				mode: 'digest',
				domain,
				userId: m.user_id
			});
			if (ids.length === 0) continue;
			report.members++;
			await db.execute(
				sql`update alert_outbox set digest_key = ${key} where id in (${sql.join(
					ids.map((id) => sql`${id}`),
					sql`, `
				)})`
			);
			const contexts = await loadOutboxContexts(db, ids, { baseUrl: base, rates });
			const keep = [];
			for (const c of contexts) {
				if (c.paused || !c.email)
					await settle(db, c.outboxId, owner, {
						kind: 'skip',
						reason: c.paused ? 'watch paused before the digest' : 'no e-mail address'
					});
				else keep.push(c);
			}
			if (keep.length === 0) {
				report.skippedEmpty++;
				continue;
			}
			const token = signUnsubscribeToken(options.secret, { kind: 'all', userId: m.user_id });
			const message = renderDigestMessage(
				keep.map((c) => ({ ...c.view, soldOutAt: c.soldOutSince })),
				{ manageUrl: `${base}/account/watches`, unsubscribeUrl: unsubscribeUrl(base, token) },
				local.date
			);
			const digestId = Buffer.from(key).toString('base64url');
			try {
				const info = await transport.sendMail({
					from: options.smtp.from,
					to: keep[0].email!,
					...message,
					messageId: `<digest-${digestId}@${domain}>`,
					headers: { ...unsubscribeHeaders(base, token, domain), 'Auto-Submitted': 'auto-generated' }
				});
				if (info.rejected?.length)
					throw Object.assign(new Error(`recipient rejected: ${info.rejected.join(', ')}`), { responseCode: 550 });
			} catch (err) {
				report.failed++;
				const error = (err as Error).message ?? String(err);
				for (const c of keep) {
					const dead = c.attempts >= maxAttempts || ((err as { responseCode?: number }).responseCode ?? 0) >= 500;
					await settle(
						db,
						c.outboxId,
						owner,
						dead
							? { kind: 'dead', error: `digest: ${error}` }
							: {
									kind: 'retry',
									error: `digest: ${error}`,
									delayMs: backoffMs(
										c.attempts,
										options.backoffBaseMs ?? 120_000,
										options.backoffMaxMs ?? 4 * 3_600_000
									)
								}
					);
				}
				continue;
			}
			for (const c of keep) await settle(db, c.outboxId, owner, { kind: 'sent' });
			report.sent++;
			report.items += keep.length;
		}
	} finally {
		if (!options.transport) transport.close();
	}
	return report;
}
