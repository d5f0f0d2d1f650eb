// The errors services raise, as a small closed set of kinds. Pure: no SvelteKit, no database, so
// the engine's callers, scripts, workers and pages can all raise and read them. How a kind becomes
// an HTTP answer is decided once, in src/lib/server/errors.ts.

export const DOMAIN_ERROR_KINDS = ['not-found', 'forbidden', 'conflict', 'invalid', 'unavailable'] as const;
export type DomainErrorKind = (typeof DOMAIN_ERROR_KINDS)[number];

/**
 * What is wrong with an `invalid` input, where the answer distinguishes it: a body over the size
 * limit, a body of a type that is not accepted, or a stored file the engine cannot read.
 */
export type InvalidDetail = 'too-large' | 'unsupported-type' | 'unreadable-file';

export class DomainError extends Error {
	constructor(
		public readonly kind: DomainErrorKind,
		message: string,
		public readonly detail: InvalidDetail | null = null
	) {
		super(message);
		this.name = 'DomainError';
	}
}

export const notFound = (message: string) => new DomainError('not-found', message);
export const forbidden = (message: string) => new DomainError('forbidden', message);
export const conflict = (message: string) => new DomainError('conflict', message);
export const invalid = (message: string, detail: InvalidDetail | null = null) => new DomainError('invalid', message, detail);
export const unavailable = (message: string) => new DomainError('unavailable', message);

export function isDomainError(e: unknown, kind?: DomainErrorKind): e is DomainError {
	return e instanceof DomainError && (kind === undefined || e.kind === kind);
}
