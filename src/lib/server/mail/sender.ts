import { randomUUID } from 'node:crypto';
import { sql } from 'drizzle-orm';
import type { Database } from '../db/client';
import { rowsOf } from '../audit/ledger';
import type { NotificationKind } from '../db/schema';
import type { MailTransport } from './transport';
import { defaultRetryPolicy, isPermanentFailure, retryDelaySeconds, shouldGiveUp, type RetryPolicy } from './backoff';

export interface SenderOptions {
	/** Rows claimed per pass. */
	batchSize?: number;
	/** How long a claim holds a row; longer than the transport's worst-case wait (transport.ts). */
	leaseSeconds?: number;
	retry?: RetryPolicy;
	/** Where failures are logged; console.error by default. */
	log?: (line: string) => void;
}

export interface PassResult {
	claimed: number;
	sent: number;
	retried: number;
	failed: number;
}

interface ClaimedRow {
	id: string;
	kind: NotificationKind;
	recipient_user_id: string;
	to_address: string;
	subject: string;
	body: string;
	attempts: number;
	age_seconds: number;
}

/**
 * Claims due rows: a lease (claimed_until) and a token, in one statement. FOR UPDATE SKIP LOCKED
 * lets two server processes on one PostgreSQL database claim at once without waiting on or taking
 * each other's rows; a row whose lease ran out (a sender died mid-send) is due again. Delivery is
 * at least once: a crash between the server's 250 reply and the "sent" mark repeats that one mail.
 */
async function claimDue(db: Database, token: string, batchSize: number, leaseSeconds: number): Promise<ClaimedRow[]> {
	const result = await db.execute(sql`
		update mail_outbox o
		   set claimed_until = now() + make_interval(secs => ${leaseSeconds}), claim_token = ${token}, attempts = o.attempts + 1
		 where o.id in (
			select id from mail_outbox
			 where status = 'pending' and next_attempt_at <= now() and (claimed_until is null or claimed_until <= now())
			 order by next_attempt_at, created_at
			 limit ${batchSize}
			 for update skip locked)
		returning o.id, o.kind, o.recipient_user_id, o.to_address, o.subject, o.body, o.attempts,
		          extract(epoch from now() - o.created_at)::float8 as age_seconds`);
	return rowsOf<ClaimedRow>(result).map((r) => ({ ...r, attempts: Number(r.attempts), age_seconds: Number(r.age_seconds) }));
}

/** The reason of a failure, without anything of the request that caused the mail (for the log and last_error). */
export function reasonOf(err: unknown): string {
	if (!(err instanceof Error)) return String(err).slice(0, 500);
	const e = err as Error & { code?: string; responseCode?: number; command?: string };
	const where = e.command ? ` at ${e.command}` : '';
	return `${e.code ?? e.name}${where}: ${e.message}`.replace(/\s+/g, ' ').slice(0, 500);
}

/**
 * One pass of the sender: claims due rows, sends each, and marks it sent, due again later
 * (exponential backoff, backoff.ts) or failed (permanent refusal, or older than the give-up time).
 * A mark only lands while this pass's claim still holds the row.
 */
export async function deliverDue(db: Database, transport: MailTransport, options: SenderOptions = {}): Promise<PassResult> {
	const retry = options.retry ?? defaultRetryPolicy;
	const log = options.log ?? ((line: string) => console.error(line));
	const token = randomUUID();
	const rows = await claimDue(db, token, options.batchSize ?? 20, options.leaseSeconds ?? 120);
	const result: PassResult = { claimed: rows.length, sent: 0, retried: 0, failed: 0 };
	for (const row of rows) {
		try {
			const info = await transport.transporter.sendMail({
				from: transport.from,
				to: row.to_address,
				subject: row.subject,
				text: row.body,
				// RFC 3834 5: machine-generated mail says so, so auto-responders do not answer it.
				// The outbox id lets a reader (and the tests) tell a repeat from a second notice.
				headers: { 'Auto-Submitted': 'auto-generated', 'X-Rimebook-Notification': row.kind, 'X-Rimebook-Outbox-Id': row.id }
			});
			await db.execute(sql`
				update mail_outbox set status = 'sent', sent_at = now(), message_id = ${String(info.messageId ?? '')}, last_error = null,
				       claimed_until = null, claim_token = null
				 where id = ${row.id} and claim_token = ${token}`);
			result.sent += 1;
		} catch (err) {
			const reason = reasonOf(err);
			const permanent = isPermanentFailure(err as { responseCode?: number; command?: string; code?: string });
			if (permanent || shouldGiveUp(row.age_seconds, retry)) {
				await db.execute(sql`
					update mail_outbox set status = 'failed', last_error = ${reason}, claimed_until = null, claim_token = null
					 where id = ${row.id} and claim_token = ${token}`);
				result.failed += 1;
				log(`[mail] gave up on notification ${row.id} (${row.kind}) for user ${row.recipient_user_id} after ${row.attempts} attempt(s)${permanent ? ', refused for good' : ''}: ${reason}`);
			} else {
				const delay = retryDelaySeconds(row.attempts, retry);
				await db.execute(sql`
					update mail_outbox set next_attempt_at = now() + make_interval(secs => ${delay}), last_error = ${reason}, claimed_until = null, claim_token = null
					 where id = ${row.id} and claim_token = ${token}`);
				result.retried += 1;
				log(`[mail] attempt ${row.attempts} of notification ${row.id} (${row.kind}) for user ${row.recipient_user_id} failed; next try in ${delay} s: ${reason}`);
			}
		}
	}
	return result;
}

export interface RunningSender {
	/** Runs a pass now (after the one in flight, if any). */
	wake(): Promise<PassResult | null>;
	stop(): Promise<void>;
}

/**
 * The background sender: a pass every `intervalSeconds` (unref'd timer: it never keeps the process
 * alive), never two passes of one process at once, errors logged and the loop kept going. It runs
 * off the request path, so a mail server that is down never delays a GMP action (issue 8, "Bad input").
 */
export function startMailSender(db: Database, transport: MailTransport, options: SenderOptions & { intervalSeconds?: number } = {}): RunningSender {
	const log = options.log ?? ((line: string) => console.error(line));
	let inFlight: Promise<PassResult | null> | null = null;
	let stopped = false;
	const pass = (): Promise<PassResult | null> => {
		if (stopped) return Promise.resolve(null);
		if (inFlight) return inFlight.then(() => pass());
		inFlight = deliverDue(db, transport, options)
			.catch((err) => {
				log(`[mail] sender pass failed: ${reasonOf(err)}`);
				return null;
			})
			.finally(() => {
				inFlight = null;
			});
		return inFlight;
	};
	const timer = setInterval(() => void pass(), (options.intervalSeconds ?? 10) * 1000);
	timer.unref?.();
	void pass();
	return {
		wake: pass,
		async stop() {
			stopped = true;
			clearInterval(timer);
			await inFlight;
		}
	};
}
