// Generator runs: the names, kinds and per-file metadata the upload page, the API and the server
// agree on. Pure (zod only), so the page can name parts from file names exactly as the server does.
import { z } from 'zod';
import { DomainError } from './domain-error';

export const RUN_KIND_VALUES = ['samples', 'iterations'] as const;
export type RunKindValue = (typeof RUN_KIND_VALUES)[number];

/** At most this many bytes of metadata JSON per file (it is stored with the revision). */
export const META_MAX_BYTES = 4096;

/** What a generator may say about one file: any JSON object; `iteration` and `part` have a meaning here. */
export const fileMetaSchema = z
	.object({
		iteration: z.number().int('"iteration" must be a whole number.').min(0, '"iteration" must be 0 or more.').max(2_000_000_000).optional(),
		part: z.string().trim().min(1).max(120).optional()
	})
	.catchall(z.unknown());
export type FileMeta = z.infer<typeof fileMetaSchema>;

/**
 * Parses per-file metadata as sent (a JSON object as text). Empty or absent → null. Bad JSON, a
 * non-object, a bad iteration or more than META_MAX_BYTES → an `invalid` DomainError that says which.
 */
export function parseFileMeta(raw: string | null | undefined): FileMeta | null {
	if (raw == null || raw.trim() === '') return null;
	if (new TextEncoder().encode(raw).length > META_MAX_BYTES) throw new DomainError('invalid', `The file metadata is larger than ${META_MAX_BYTES} bytes of JSON. Nothing was stored.`);
	let value: unknown;
	try {
		value = JSON.parse(raw);
	} catch (e) {
		throw new DomainError('invalid', `The file metadata is not valid JSON (${(e as Error).message.slice(0, 120)}). Nothing was stored.`);
	}
	if (typeof value !== 'object' || value === null || Array.isArray(value)) throw new DomainError('invalid', 'The file metadata must be a JSON object, e.g. {"iteration": 3}. Nothing was stored.');
	const r = fileMetaSchema.safeParse(value);
	if (!r.success) throw new DomainError('invalid', `The file metadata was refused: ${r.error.issues.map((i) => `${i.path.join('.') || 'metadata'}: ${i.message}`).join('; ')}. Nothing was stored.`);
	return r.data;
}

/** A run's name as given: trimmed, 1–120 characters, no control characters. */
export function cleanRunName(raw: string): string {
	const name = raw.trim();
	if (!name) throw new DomainError('invalid', 'The run needs a name.');
	if (name.length > 120) throw new DomainError('invalid', 'A run name has at most 120 characters.');
	if (/[\u0000-\u001f\u007f]/.test(name)) throw new DomainError('invalid', 'A run name may not hold control characters.');
	return name;
}

/** `samples` or `iterations`; null when not given. */
export function parseRunKind(raw: string | null | undefined): RunKindValue | null {
	if (raw == null || raw.trim() === '') return null;
	const k = raw.trim().toLowerCase();
	if ((RUN_KIND_VALUES as readonly string[]).includes(k)) return k as RunKindValue;
	throw new DomainError('invalid', `A run kind is "samples" (each file its own part) or "iterations" (every file a revision of one part), not "${raw.slice(0, 40)}".`);
}

/**
 * A part's address from a name a person typed ("Pod with fins" → "pod-with-fins"): lower-cased,
 * accents dropped, every run of characters other than a–z and 0–9 turned into one dash, dashes
 * trimmed from both ends, at most 64 characters. Null when nothing is left (e.g. "!!!").
 */
export function slugFromName(name: string): string | null {
	const slug = name
		.normalize('NFKD')
		.replace(/[\u0300-\u036f]/g, '')
		.toLowerCase()
		.replace(/[^a-z0-9]+/g, '-')
		.replace(/^-+|-+$/g, '')
		.slice(0, 64)
		.replace(/-+$/, '');
	return slug || null;
}

/**
 * The part a file of a samples run names by its file name: the name without folders and without its
 * mesh extension, made an address as slugFromName does ("Pod_07 (v2).STL" → "pod-07-v2"). Null when
 * nothing is left (e.g. "___.stl").
 */
export function partSlugFromName(name: string): string | null {
	return slugFromName((name.replace(/\\/g, '/').split('/').pop() ?? '').replace(/\.(stl|ply|obj)$/i, ''));
}
