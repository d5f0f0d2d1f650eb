// Outgoing mail goes through the mail_outbox table: written in the same transaction as the change it
// reports, then delivered over SMTP by flushOutbox(). A failed delivery stays pending and is retried.
import { and, asc, eq, lt } from 'drizzle-orm';
import nodemailer from 'nodemailer';
import { config } from '../config';
import type { Db } from '../db';
import { mailOutbox } from '../db/schema';

export interface Mail {
	to: string;
	subject: string;
	text: string;
	html?: string;
}

type Tx = Pick<Db, 'insert'>;

export async function queueMail(tx: Tx, mail: Mail): Promise<void> {
	await tx.insert(mailOutbox).values({
		toAddress: mail.to,
		subject: mail.subject.slice(0, 300),
		textBody: mail.text,
		htmlBody: mail.html ?? null
	});
}

const MAX_ATTEMPTS = 8;

/**
 * Delivers pending mail. Each message is claimed with FOR UPDATE SKIP LOCKED inside its own
 * transaction, so several app processes sharing the database never send the same mail twice.
 */
export async function flushOutbox(db: Db): Promise<{ sent: number; failed: number }> {
	let sent = 0;
	let failed = 0;
	let transport: ReturnType<typeof nodemailer.createTransport> | undefined;
	try {
		for (let i = 0; i < 50; i++) {
			const done = await db.transaction(async (tx) => {
				const [m] = await tx
					.select()
					.from(mailOutbox)
					.where(and(eq(mailOutbox.status, 'pending'), lt(mailOutbox.attempts, MAX_ATTEMPTS)))
					.orderBy(asc(mailOutbox.id))
					.limit(1)
					.for('update', { skipLocked: true });
				if (!m) return true;
				transport ??= nodemailer.createTransport({ host: config.smtpHost, port: config.smtpPort, secure: false, ignoreTLS: true, connectionTimeout: 5000 });
				try {
					await transport.sendMail({ from: config.mailFrom, to: m.toAddress, subject: m.subject, text: m.textBody, html: m.htmlBody ?? undefined });
					await tx.update(mailOutbox).set({ status: 'sent', sentAt: new Date(), attempts: m.attempts + 1 }).where(eq(mailOutbox.id, m.id));
					sent++;
				} catch (e) {
					const attempts = m.attempts + 1;
					await tx
						.update(mailOutbox)
						.set({ attempts, lastError: String((e as Error).message).slice(0, 500), status: attempts >= MAX_ATTEMPTS ? 'failed' : 'pending' })
						.where(eq(mailOutbox.id, m.id));
					failed++;
					return true; // SMTP trouble: try the rest on a later tick.
				}
				return false;
			});
			if (done) break;
		}
	} finally {
		transport?.close();
	}
	return { sent, failed };
}

export function escapeHtml(s: string): string {
	return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/** A plain mail with one call to action; text and HTML say the same thing. */
export function simpleMail(to: string, subject: string, lines: string[], link?: { href: string; label: string }): Mail {
	const text = [...lines, ...(link ? ['', `${link.label}: ${link.href}`] : []), '', '— Shellgate'].join('\n');
	const html =
		lines.map((l) => `<p>${escapeHtml(l)}</p>`).join('') +
		(link ? `<p><a href="${escapeHtml(link.href)}">${escapeHtml(link.label)}</a></p>` : '') +
		'<p style="color:#667">— Shellgate</p>';
	return { to, subject, text, html };
}
