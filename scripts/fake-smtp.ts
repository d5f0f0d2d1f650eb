// Mail catcher for local runs and tests: accepts every message on 127.0.0.1:SMTP_PORT and stores it
// as one JSON file {id, receivedAt, from, to[], subject, text, html, raw} in MAILBOX_DIR.
// File names start with the receive time in ms, so a name sort is a time sort.
import { mkdirSync, renameSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { randomBytes } from 'node:crypto';
import { SMTPServer } from 'smtp-server';

export interface StoredMail {
	id: string;
	receivedAt: string;
	/** From header as written (display name and address), else the envelope sender. */
	from: string;
	/** Envelope recipients, bare addresses (includes Bcc). */
	to: string[];
	subject: string;
	text: string | null;
	html: string | null;
	raw: string;
}

const port = Number(process.env.SMTP_PORT ?? 2525);
const mailboxDir = resolve(process.env.MAILBOX_DIR ?? '.data/mailbox');
const MAX_BYTES = 25 * 1024 * 1024;

interface Part {
	headers: Map<string, string>;
	body: string;
}

function splitPart(raw: string): Part {
	const m = /\r?\n\r?\n/.exec(raw);
	const head = m ? raw.slice(0, m.index) : raw;
	const body = m ? raw.slice(m.index + m[0].length) : '';
	const headers = new Map<string, string>();
	// Unfold continuation lines (RFC 5322 §2.2.3), then one header per line.
	for (const line of head.replace(/\r?\n[ \t]+/g, ' ').split(/\r?\n/)) {
		const colon = line.indexOf(':');
		if (colon <= 0) continue;
		const name = line.slice(0, colon).trim().toLowerCase();
		if (!headers.has(name)) headers.set(name, line.slice(colon + 1).trim());
	}
	return { headers, body };
}

function param(header: string, name: string): string | null {
	const m = new RegExp(`;\\s*${name}\\s*=\\s*(?:"([^"]*)"|([^;\\s]+))`, 'i').exec(header);
	return m ? (m[1] ?? m[2]) : null;
}

function decodeBytes(bytes: Buffer, charset: string | null): string {
	try {
		return new TextDecoder(charset ?? 'utf-8').decode(bytes);
	} catch {
		return bytes.toString('utf8');
	}
}

// Quoted-printable (RFC 2045 §6.7) to bytes; `underscoreIsSpace` for the Q encoding of headers.
function qpBytes(s: string, underscoreIsSpace: boolean): Buffer {
	if (underscoreIsSpace) s = s.replace(/_/g, ' ');
	s = s.replace(/=\r?\n/g, '');
	const out: number[] = [];
	for (let i = 0; i < s.length; i++) {
		const c = s.charCodeAt(i);
		if (c === 61 && /^[0-9A-Fa-f]{2}$/.test(s.slice(i + 1, i + 3))) {
			out.push(parseInt(s.slice(i + 1, i + 3), 16));
			i += 2;
		} else if (c < 128) out.push(c);
		else out.push(...Buffer.from(s[i], 'utf8'));
	}
	return Buffer.from(out);
}

// Encoded words in headers (RFC 2047), e.g. =?UTF-8?Q?Mesh_held_back?=
function decodeHeader(value: string): string {
	return value
		.replace(/(=\?[^?]+\?[BbQq]\?[^?]*\?=)\s+(?==\?)/g, '$1')
		.replace(/=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g, (_all, charset: string, enc: string, data: string) =>
			decodeBytes(enc.toUpperCase() === 'B' ? Buffer.from(data, 'base64') : qpBytes(data, true), charset)
		);
}

function decodeBody(part: Part): string {
	const cte = (part.headers.get('content-transfer-encoding') ?? '7bit').toLowerCase();
	const charset = param(part.headers.get('content-type') ?? '', 'charset');
	if (cte === 'base64') return decodeBytes(Buffer.from(part.body.replace(/\s+/g, ''), 'base64'), charset);
	if (cte === 'quoted-printable') return decodeBytes(qpBytes(part.body, false), charset);
	return part.body;
}

// Depth-first walk; the first text/plain and text/html leaves win. Attachments are skipped.
function collectBodies(part: Part, out: { text: string | null; html: string | null }, depth = 0): void {
	const type = part.headers.get('content-type') ?? 'text/plain';
	const mime = type.split(';')[0].trim().toLowerCase();
	const disposition = (part.headers.get('content-disposition') ?? '').toLowerCase();
	if (mime.startsWith('multipart/')) {
		const boundary = param(type, 'boundary');
		if (!boundary || depth > 10) return;
		const pieces = part.body.split(new RegExp(`\\r?\\n?--${boundary.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}`));
		// pieces[0] is the preamble; the piece after the closing delimiter starts with "--".
		for (const piece of pieces.slice(1)) {
			if (piece.startsWith('--')) break;
			collectBodies(splitPart(piece.replace(/^[ \t]*\r?\n/, '')), out, depth + 1);
		}
		return;
	}
	if (disposition.startsWith('attachment')) return;
	if (mime === 'text/plain' && out.text === null) out.text = decodeBody(part);
	else if (mime === 'text/html' && out.html === null) out.html = decodeBody(part);
}

function parseMail(raw: string, envelopeFrom: string, envelopeTo: string[]): Omit<StoredMail, 'id' | 'receivedAt'> {
	const top = splitPart(raw);
	const bodies = { text: null as string | null, html: null as string | null };
	collectBodies(top, bodies);
	return {
		from: decodeHeader(top.headers.get('from') ?? envelopeFrom),
		to: envelopeTo,
		subject: decodeHeader(top.headers.get('subject') ?? ''),
		text: bodies.text,
		html: bodies.html,
		raw
	};
}

let counter = 0;
function store(mail: Omit<StoredMail, 'id' | 'receivedAt'>): string {
	const received = new Date();
	const id = `${received.getTime()}-${String(counter++).padStart(4, '0')}-${randomBytes(3).toString('hex')}`;
	const record: StoredMail = { id, receivedAt: received.toISOString(), ...mail };
	const file = join(mailboxDir, `${id}.json`);
	// Write then rename, so a reader never sees half a file.
	writeFileSync(`${file}.tmp`, JSON.stringify(record, null, 2));
	renameSync(`${file}.tmp`, file);
	return id;
}

mkdirSync(mailboxDir, { recursive: true });

const server = new SMTPServer({
	authOptional: true,
	disabledCommands: ['STARTTLS'],
	size: MAX_BYTES,
	banner: 'Shellgate mail catcher',
	logger: false,
	onData(stream, session, callback) {
		const chunks: Buffer[] = [];
		stream.on('data', (c: Buffer) => chunks.push(c));
		stream.on('end', () => {
			if (stream.sizeExceeded) {
				const err = Object.assign(new Error('Message exceeds the fixed maximum message size'), { responseCode: 552 });
				return callback(err);
			}
			try {
				const raw = Buffer.concat(chunks).toString('utf8');
				const envelopeFrom = session.envelope.mailFrom ? session.envelope.mailFrom.address : '';
				const envelopeTo = session.envelope.rcptTo.map((r) => r.address);
				const mail = parseMail(raw, envelopeFrom, envelopeTo);
				const id = store(mail);
				console.log(`[fake-smtp] ${id}: "${mail.subject}" to ${envelopeTo.join(', ')}`);
				callback();
			} catch (e) {
				console.error('[fake-smtp] could not store message:', e);
				callback(Object.assign(new Error('Could not store message'), { responseCode: 451 }));
			}
		});
	}
});

let listening = false;
server.on('error', (e) => {
	console.error('[fake-smtp] error:', e.message);
	if (!listening) process.exit(1);
});

server.listen(port, '127.0.0.1', () => {
	listening = true;
	console.log(`[fake-smtp] listening on 127.0.0.1:${port}, storing mail in ${mailboxDir}`);
});

function shutdown() {
	server.close(() => process.exit(0));
	setTimeout(() => process.exit(0), 2000).unref();
}
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
