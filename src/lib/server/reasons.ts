// Reasons and error messages people read (revision reasons, job errors, API messages) never show a
// server path: a failure is described by what went wrong, and any path left in a message is hidden.

const PATH = /(^|[\s'"`(=:])((?:[A-Za-z]:\\|\/)(?:[^\s'"`()\\/]+[\\/])+[^\s'"`(),;]*)/g;

/** The text with every absolute server path (POSIX or Windows) replaced by "(server path)". */
export function withoutPaths(text: string): string {
	return text.replace(PATH, (_m, before: string) => `${before}(server path)`);
}

/** True when the failure is the stored file being absent (retrying cannot bring it back). */
export function storedFileMissing(e: unknown): boolean {
	const err = e as { code?: string; name?: string } | null;
	return err?.code === 'ENOENT' || err?.name === 'NoSuchKey' || err?.name === 'NotFound';
}

/** A failure as a reason a person can read: file-system codes in words, no paths. */
export function failureReason(e: unknown): string {
	const err = e as { code?: string; name?: string; message?: string } | null;
	const code = err?.code ?? '';
	if (storedFileMissing(e)) return 'the stored file is missing';
	if (code === 'EACCES' || code === 'EPERM') return 'the stored file could not be read (permission denied)';
	if (code === 'EISDIR' || code === 'ENOTDIR') return 'the stored file is not where it should be';
	return withoutPaths(String(err?.message ?? e));
}
