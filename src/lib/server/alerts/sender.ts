/**
 * The sender: delivers due instant-mode outbox rows over SMTP (nodemailer).
 *
 * Delivery guarantee: at least once. A row is claimed with FOR UPDATE SKIP LOCKED and a lease
 * (status 'sending', lease_until), sent, then marked 'sent'. If the process dies after the SMTP
 * server accepted the message but before the row is marked, the lease runs out and another
 * sender sends it again, with the same Message-ID (fixed per outbox row when first claimed),
 * so a duplicate is recognisable. Losing an alert would be worse than a rare repeat.
 *
 * Failures back off exponentially; after maxAttempts (or a permanent 5xx SMTP reply) the row is
 * 'dead' with the reason in last_error. When the SMTP server cannot be reached at all, the rest
 * of the batch is put back without spending an attempt. Quiet hours defer a row to their end.
 */
import { randomUUID } from 'node:crypto';
import { sql } from 'drizzle-orm';
import nodemailer, { type Transporter } from 'nodemailer';
import { transportOptions, type SmtpConfig } from '../mail/transport';
import { loadRates } from '../queries/offers';
import type { Database } from '../db/client';
import { rowsOf, type Db } from './db';
import { renderAlertMessage, unsubscribeHeaders, unsubscribeUrl, type RenderedMessage } from './message';
import { quietUntil } from './schedule';
import { signUnsubscribeToken } from './token';
import { loadOutboxContexts, type OutboxContext } from './view';

export interface SenderOptions {
	smtp: SmtpConfig;
	/** Absolute base for links (PUBLIC_BASE_URL). */
	baseUrl: string;
	/** AUTH_SECRET: signs the unsubscribe tokens. */
	secret: string;
	/** Identifies this sender in lease_owner. */
	owner?: string;
	batchSize?: number;
	/** How long a claim holds before another sender may take the row over. */
	leaseMs?: number;
	maxAttempts?: number;
	backoffBaseMs?: number;
	backoffMaxMs?: number;
	/** Parallel SMTP sends within a batch. */
	concurrency?: number;
	/** Pause after each message per parallel sender (a provider's rate limit). */
	sendSpacingMs?: number;
	/** Reuse a transport (tests, benchmarks); otherwise one pooled transport per call. */
	transport?: Transporter;
	/** Called after the SMTP server accepted a message and before the row is marked (tests). */
	afterSend?: (outboxId: number) => Promise<void> | void;
	log?: (line: string) => void;
}

export interface SendReport {
	claimed: number;
	sent: number;
	retried: number;
	dead: number;
	deferred: number;
	skipped: number;
	released: number;
}

export const DEFAULT_MAX_ATTEMPTS = 8;

/** Sender settings from the environment (ALERT_MAX_ATTEMPTS, ALERT_BACKOFF_BASE_SECONDS, ...). */
export function senderOptionsFromEnv(env: Record<string, string | undefined>, smtp: SmtpConfig): SenderOptions {
	const num = (name: string, fallback: number, min: number, max: number) => {
		const raw = env[name];
		if (raw === undefined || raw === '') return fallback;
		const n = Number(raw);
		if (!Number.isFinite(n) || n < min || n > max)
			throw new Error(`${name} must be a number between ${min} and ${max}, got "${raw}"`);
		return n;
	};
	const baseUrl = env.PUBLIC_BASE_URL || env.ORIGIN;
	if (!baseUrl) throw new Error('PUBLIC_BASE_URL is not set: alert links need an absolute base URL');
	if (!env.AUTH_SECRET) throw new Error('AUTH_SECRET is not set: unsubscribe links are signed with it');
	return {
		smtp,
		baseUrl,
		secret: env.AUTH_SECRET,
		batchSize: num('ALERT_BATCH_SIZE', 50, 1, 1000),
		maxAttempts: num('ALERT_MAX_ATTEMPTS', DEFAULT_MAX_ATTEMPTS, 1, 50),
		backoffBaseMs: num('ALERT_BACKOFF_BASE_SECONDS', 120, 0, 86_400) * 1000,
		leaseMs: num('ALERT_LEASE_SECONDS', 300, 1, 3600) * 1000,
		concurrency: num('ALERT_CONCURRENCY', 4, 1, 64),
		sendSpacingMs: num('ALERT_SEND_SPACING_MS', 0, 0, 60_000)
	};
}

/**
 * A pooled SMTP transport for alert batches: a few long-lived connections instead of one per
 * message (same settings as the sign-in mail's transport otherwise).
 */
export function createAlertTransport(smtp: SmtpConfig, connections = 4): Transporter {
	return nodemailer.createTransport({
		...transportOptions(smtp),
		pool: true,
		maxConnections: connections,
		maxMessages: 500
	});
}

/** Delay before retry number `attempts` (1-based): base * 2^(attempts-1), capped, with 20 % jitter. */
export function backoffMs(attempts: number, baseMs: number, maxMs: number): number {
	const raw = Math.min(maxMs, baseMs * 2 ** Math.max(0, attempts - 1));
	return Math.round(raw * (0.8 + Math.random() * 0.4));
}

/** The domain of the From address, for Message-IDs and the mailto unsubscribe. */
export function mailDomain(from: string): string {
	return /@([A-Za-z0-9.-]+)>?\s*$/.exec(from)?.[1] ?? 'scopegrade.test';
}

/**
 * Claim due rows of one mode: pending and due, or 'sending' with an expired lease (a sender
 * died). Each claim counts as an attempt and fixes the row's Message-ID.
 */
export async function claimDue(
	db: Db,
	opts: { owner: string; limit: number; leaseMs: number; mode: 'instant' | 'digest'; domain: string; userId?: string }
) {
	const rows = rowsOf<{ id: number }>(
		await db.execute(sql`
			with due as (
				select id from alert_outbox
				where mode = ${opts.mode}
					and ((status = 'pending' and next_attempt_at <= now()) or (status = 'sending' and lease_until < now()))
					${opts.userId ? sql`and user_id = ${opts.userId}` : sql``}
				order by next_attempt_at, id
				limit ${opts.limit}
				for update skip locked
			)
			update alert_outbox o
			set status = 'sending', lease_owner = ${opts.owner},
				lease_until = now() + ${opts.leaseMs} * interval '1 millisecond',
				attempts = o.attempts + 1,
				message_id = coalesce(o.message_id, '<alert-' || o.id || '.' || (extract(epoch from o.created_at) * 1000)::bigint || '@' || ${opts.domain} || '>')
			from due where o.id = due.id
			returning o.id`)
	);
	return rows.map((r) => Number(r.id));
}

type Settle =
	| { kind: 'sent' }
	| { kind: 'retry'; error: string; delayMs: number }
	| { kind: 'dead'; error: string }
	| { kind: 'defer'; until: Date; reason: string }
	| { kind: 'skip'; reason: string }
	| { kind: 'release'; delayMs: number; error: string };

/** Settle a claimed row; only the lease owner may (a row taken over by another sender is left alone). */
export async function settle(db: Db, id: number, owner: string, s: Settle): Promise<boolean> {
	const where = sql`id = ${id} and lease_owner = ${owner} and status = 'sending'`;
	const q =
		s.kind === 'sent'
			? sql`update alert_outbox set status = 'sent', sent_at = now(), lease_owner = null, lease_until = null, last_error = null where ${where}`
			: s.kind === 'retry'
				? sql`update alert_outbox set status = 'pending', next_attempt_at = now() + ${s.delayMs} * interval '1 millisecond', lease_owner = null, lease_until = null, last_error = ${s.error} where ${where}`
				: s.kind === 'dead'
					? sql`update alert_outbox set status = 'dead', lease_owner = null, lease_until = null, last_error = ${s.error} where ${where}`
					: s.kind === 'defer'
						? sql`update alert_outbox set status = 'pending', next_attempt_at = ${s.until.toISOString()}::timestamptz, attempts = greatest(attempts - 1, 0), lease_owner = null, lease_until = null, last_error = ${s.reason} where ${where}`
						: s.kind === 'skip'
							? sql`update alert_outbox set status = 'skipped', lease_owner = null, lease_until = null, last_error = ${s.reason} where ${where}`
							: sql`update alert_outbox set status = 'pending', next_attempt_at = now() + ${s.delayMs} * interval '1 millisecond', attempts = greatest(attempts - 1, 0), lease_owner = null, lease_until = null, last_error = ${s.error} where ${where}`;
	const res = rowsOf<unknown>(await db.execute(sql`${q} returning id`));
	return res.length === 1;
}

/** Mark rows sent after the SMTP server accepted them; only rows this sender still leases. Returns those ids. */
export async function markSent(db: Db, ids: number[], owner: string): Promise<number[]> {
	const rows = rowsOf<{ id: number }>(
		await db.execute(sql`
			update alert_outbox set status = 'sent', sent_at = now(), lease_owner = null, lease_until = null, last_error = null
			where id = any(${`{${ids.join(',')}}`}::bigint[]) and lease_owner = ${owner} and status = 'sending'
			returning id`)
	);
	return rows.map((r) => Number(r.id));
}

/** SMTP failures that say "never going to work" (RFC 5321 section 4.2.1: 5yz is permanent). */
function isPermanent(err: unknown): boolean {
	const code = (err as { responseCode?: number }).responseCode;
	return typeof code === 'number' && code >= 500 && code < 600;
}

/** The server could not be reached at all: nothing about this message is at fault. */
function isConnectionError(err: unknown): boolean {
	const code = (err as { code?: string }).code;
	return (
		code === 'ECONNECTION' || code === 'ESOCKET' || code === 'ETIMEDOUT' || code === 'EDNS' || code === 'ECONNREFUSED'
	);
}

function errorText(err: unknown): string {
	const e = err as { message?: string; responseCode?: number; code?: string };
	return [e.code, e.responseCode, e.message ?? String(err)].filter(Boolean).join(' ').slice(0, 500);
}

/** Stand-ins for the per-watch link while a message is rendered once for many watchers (no escaping touches them). */
const UNSUBSCRIBE_MARK = 'sg-unsubscribe-mark-7f3a';

/**
 * Build the nodemailer message for one instant alert. `rendered` caches the rendering per distinct
 * alert view (one restock fans out to many watchers who differ only in their unsubscribe link), so
 * a large fan-out renders its template once.
 */
export function buildAlertMail(
	ctx: OutboxContext,
	opts: Pick<SenderOptions, 'baseUrl' | 'secret' | 'smtp'>,
	rendered?: Map<string, RenderedMessage>
) {
	const token = signUnsubscribeToken(opts.secret, { kind: 'watch', watchId: ctx.watchId });
	const base = opts.baseUrl.replace(/\/+$/, '');
	const domain = mailDomain(opts.smtp.from);
	const manageUrl = `${base}/account/watches`;
	const unsubscribe = unsubscribeUrl(base, token);
	let message: RenderedMessage;
	if (!rendered || /[<>&"']/.test(unsubscribe)) {
		// A link HTML would escape differs between text and HTML: render this one on its own.
		message = renderAlertMessage(ctx.view, { manageUrl, unsubscribeUrl: unsubscribe });
	} else {
		const key = JSON.stringify(ctx.view);
		let template = rendered.get(key);
		if (!template) {
			template = renderAlertMessage(ctx.view, { manageUrl, unsubscribeUrl: UNSUBSCRIBE_MARK });
			rendered.set(key, template);
		}
		const fill = (s: string) => s.split(UNSUBSCRIBE_MARK).join(unsubscribe);
		message = { subject: template.subject, text: fill(template.text), html: fill(template.html) };
	}
	return {
		from: opts.smtp.from,
		to: ctx.email!,
		subject: message.subject,
		text: message.text,
		html: message.html,
		messageId: ctx.messageId ?? undefined,
		headers: {
			...unsubscribeHeaders(base, token, domain),
			// RFC 3834 section 5: machine-generated, so auto-responders stay quiet.
			'Auto-Submitted': 'auto-generated',
			'X-Scopegrade-Alert': String(ctx.outboxId)
		}
	};
}

/** One pass: claim a batch of due instant alerts, send them, settle each row. */
export async function sendDue(db: Db, options: SenderOptions): Promise<SendReport> {
	const owner = options.owner ?? `sender-${process.pid}-${randomUUID().slice(0, 8)}`;
	const leaseMs = options.leaseMs ?? 300_000;
	const maxAttempts = options.maxAttempts ?? DEFAULT_MAX_ATTEMPTS;
	const baseMs = options.backoffBaseMs ?? 120_000;
	const maxMs = options.backoffMaxMs ?? 4 * 3_600_000;
	const report: SendReport = { claimed: 0, sent: 0, retried: 0, dead: 0, deferred: 0, skipped: 0, released: 0 };
	const log = options.log ?? (() => {});

	const ids = await claimDue(db, {
		owner,
		limit: options.batchSize ?? 50,
		leaseMs,
		mode: 'instant',
		domain: mailDomain(options.smtp.from)
	});
	report.claimed = ids.length;
	if (ids.length === 0) return report;

	const rates = await loadRates(db as unknown as Database);
	const contexts = await loadOutboxContexts(db, ids, { baseUrl: options.baseUrl, rates });
	const rendered = new Map<string, RenderedMessage>();
	const ownTransport = !options.transport;
	const transport = options.transport ?? createAlertTransport(options.smtp, options.concurrency ?? 4);
	let unreachable: { error: string; delayMs: number } | null = null;
	const now = new Date();

	async function handle(ctx: OutboxContext) {
		if (!ctx.email) {
			if (await settle(db, ctx.outboxId, owner, { kind: 'dead', error: 'the member has no e-mail address' }))
				report.dead++;
			return;
		}
		if (ctx.paused) {
			if (
				await settle(db, ctx.outboxId, owner, { kind: 'skip', reason: 'watch paused or unsubscribed before delivery' })
			)
				report.skipped++;
			return;
		}
		if (ctx.soldOutSince) {
			// Telling someone to hurry for a unit that is already gone again breaks their trust.
			if (
				await settle(db, ctx.outboxId, owner, {
					kind: 'skip',
					reason: `sold out again at ${ctx.soldOutSince.toISOString()} before delivery`
				})
			)
				report.skipped++;
			return;
		}
		const until = quietUntil(now, ctx.quiet);
		if (until) {
			if (
				await settle(db, ctx.outboxId, owner, {
					kind: 'defer',
					until,
					reason: `quiet hours until ${until.toISOString()}`
				})
			)
				report.deferred++;
			return;
		}
		if (unreachable) {
			if (await settle(db, ctx.outboxId, owner, { kind: 'release', ...unreachable })) report.released++;
			return;
		}
		try {
			const info = await transport.sendMail(buildAlertMail(ctx, options, rendered));
			if (info.rejected?.length)
				throw Object.assign(new Error(`recipient rejected: ${info.rejected.join(', ')}`), { responseCode: 550 });
		} catch (err) {
			const error = errorText(err);
			const delayMs = backoffMs(ctx.attempts, baseMs, maxMs);
			// The rest of the batch waits as long as this row, without spending an attempt.
			if (isConnectionError(err)) unreachable = { error: `SMTP server unreachable: ${error}`, delayMs };
			if (isPermanent(err) || ctx.attempts >= maxAttempts) {
				if (
					await settle(db, ctx.outboxId, owner, { kind: 'dead', error: `after ${ctx.attempts} attempt(s): ${error}` })
				)
					report.dead++;
			} else if (await settle(db, ctx.outboxId, owner, { kind: 'retry', error, delayMs })) {
				report.retried++;
			}
			log(`alert ${ctx.outboxId}: ${error}`);
			return;
		}
		await options.afterSend?.(ctx.outboxId);
		// Marked sent together at the end of the batch (one statement instead of one per message); a
		// crash before that resends at most this batch, which README's "at least once" already allows.
		accepted.push(ctx.outboxId);
		if (options.sendSpacingMs) await new Promise((r) => setTimeout(r, options.sendSpacingMs));
	}
	const accepted: number[] = [];

	try {
		const queue = [...contexts];
		const workers = Array.from({ length: Math.max(1, Math.min(options.concurrency ?? 4, queue.length)) }, async () => {
			for (let ctx = queue.shift(); ctx; ctx = queue.shift()) await handle(ctx);
		});
		await Promise.all(workers);
	} finally {
		if (ownTransport) transport.close();
		if (accepted.length) {
			const marked = await markSent(db, accepted, owner);
			report.sent += marked.length;
			const lost = accepted.filter((id) => !marked.includes(id));
			for (const id of lost) log(`alert ${id}: sent, but the lease had passed to another sender`);
		}
	}
	// Rows claimed but gone from the join (e.g. the watch was deleted mid-batch) were removed by cascade.
	return report;
}

/** Outbox rows an admin should see: dead ones and everything still waiting. */
export async function outboxOverview(db: Db, limit = 100) {
	const rows = rowsOf<{
		id: number;
		status: string;
		mode: string;
		attempts: number;
		next_attempt_at: string;
		last_error: string | null;
		created_at: string;
		email: string | null;
		converter: string;
		shop: string;
		kind: string;
	}>(
		await db.execute(sql`
			select o.id, o.status, o.mode, o.attempts, o.next_attempt_at, o.last_error, o.created_at, u.email,
				c.brand || ' ' || c.model as converter, s.name as shop, e.kind
			from alert_outbox o
			join "user" u on u.id = o.user_id
			join stock_event e on e.id = o.stock_event_id
			join listing l on l.id = e.listing_id
			join converter c on c.id = l.converter_id
			join shop s on s.id = l.shop_id
			where o.status in ('dead', 'pending', 'sending')
			order by (o.status = 'dead') desc, o.next_attempt_at
			limit ${limit}`)
	);
	const counts = rowsOf<{ status: string; n: number }>(
		await db.execute(sql`select status::text, count(*)::int as n from alert_outbox group by status`)
	);
	return { rows, counts: Object.fromEntries(counts.map((c) => [c.status, Number(c.n)])) as Record<string, number> };
}
