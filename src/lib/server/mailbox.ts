// Reads the mail captured by the development mail catcher (scripts/fake-smtp.ts): one JSON file per message.
import fs from 'node:fs/promises';
import path from 'node:path';
import { config } from './config';

export interface CapturedMail {
	id: string;
	receivedAt: string;
	from: string;
	to: string[];
	subject: string;
	text: string;
}

export async function readMailbox(limit = 100): Promise<CapturedMail[]> {
	let names: string[];
	try {
		names = (await fs.readdir(config.mailboxDir)).filter((n) => n.endsWith('.json'));
	} catch {
		return [];
	}
	const mails: CapturedMail[] = [];
	for (const n of names) {
		try {
			const m = JSON.parse(await fs.readFile(path.join(config.mailboxDir, n), 'utf8'));
			mails.push({
				id: String(m.id ?? n),
				receivedAt: String(m.receivedAt ?? ''),
				from: String(m.from ?? ''),
				to: Array.isArray(m.to) ? m.to.map(String) : [String(m.to ?? '')],
				subject: String(m.subject ?? ''),
				text: String(m.text ?? '')
			});
		} catch {
			// A message still being written; it shows on the next load.
		}
	}
	mails.sort((a, b) => b.receivedAt.localeCompare(a.receivedAt));
	return mails.slice(0, limit);
}
