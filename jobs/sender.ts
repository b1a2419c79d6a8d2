/**
 * Alert sender job: drains due instant alerts from alert_outbox over SMTP.
 *
 * Registered in jobs/index.ts (SENDER_CRON, default every 20 seconds). Also runs on its own:
 *   tsx jobs/sender.ts          loop until SIGINT/SIGTERM (SENDER_INTERVAL_MS between passes)
 *   tsx jobs/sender.ts --once   one drain, then exit
 * Several senders may run at once: rows are claimed with FOR UPDATE SKIP LOCKED and a lease.
 */
import type { Database } from '../src/lib/server/db/client';
import { createDb } from '../src/lib/server/db/client';
import { smtpConfigFrom } from '../src/lib/server/mail/transport';
import {
	createAlertTransport,
	sendDue,
	senderOptionsFromEnv,
	type SendReport,
	type SenderOptions
} from '../src/lib/server/alerts/sender';

/**
 * Send batches until nothing due is left (or `maxBatches` passes); returns the summed report.
 * Two lanes claim and send half-size batches side by side over one pooled transport, so one lane's
 * database work (claim, load, mark sent) overlaps the other's SMTP traffic. The pool keeps the
 * connection count, and the messages sent but not yet marked stay within one ALERT_BATCH_SIZE (the
 * bound README's "at least once" gives for a crash).
 */
export async function drainOutbox(
	db: Database,
	options: SenderOptions,
	maxBatches = 100,
	lanes = 2
): Promise<SendReport> {
	const total: SendReport = { claimed: 0, sent: 0, retried: 0, dead: 0, deferred: 0, skipped: 0, released: 0 };
	const transport = options.transport ?? createAlertTransport(options.smtp, options.concurrency ?? 4);
	const n = Math.max(1, Math.min(lanes, options.batchSize ?? 50));
	const laneBatch = Math.floor((options.batchSize ?? 50) / n);
	let batches = 0;
	let stop = false;
	const lane = async () => {
		while (!stop && batches < maxBatches) {
			batches++;
			const r = await sendDue(db, { ...options, batchSize: laneBatch, transport });
			for (const k of Object.keys(total) as (keyof SendReport)[]) total[k] += r[k];
			// Stop on a short batch, or when the server is down (everything was put back).
			if (r.claimed < laneBatch || r.sent === 0) stop = true;
		}
	};
	try {
		await Promise.all(Array.from({ length: n }, lane));
	} finally {
		if (!options.transport) transport.close();
	}
	return total;
}

/** Every 20 seconds (node-cron's optional seconds field); SENDER_CRON overrides. */
export const DEFAULT_SENDER_CRON = '*/20 * * * * *';

/** One sender pass for the jobs process, configured from the environment. */
export function senderTask(db: Database, env: Record<string, string | undefined> = process.env) {
	const options = senderOptionsFromEnv(env, smtpConfigFrom(env));
	return () => drainOutbox(db, { ...options, log: (l) => console.log(`sender: ${l}`) });
}

if (import.meta.url === `file://${process.argv[1]}`) {
	const { db, sql } = createDb(process.env.DATABASE_URL, { max: 4 });
	const options = senderOptionsFromEnv(process.env, smtpConfigFrom(process.env));
	const transport = createAlertTransport(options.smtp, options.concurrency);
	const once = process.argv.includes('--once');
	const interval = Number(process.env.SENDER_INTERVAL_MS || 2000);
	let stopping = false;
	const stop = async () => {
		stopping = true;
	};
	process.on('SIGINT', stop);
	process.on('SIGTERM', stop);
	const run = async () => {
		const r = await drainOutbox(db, { ...options, transport, log: (l) => console.log(`sender: ${l}`) });
		if (r.claimed) console.log(`sender: ${JSON.stringify(r)}`);
	};
	try {
		do {
			await run().catch((err) => console.error(`sender: ${err instanceof Error ? err.message : err}`));
			if (once || stopping) break;
			await new Promise((r) => setTimeout(r, interval));
		} while (!stopping);
	} finally {
		transport.close();
		await sql.end({ timeout: 5 });
	}
}
