// Which signed-in roles may open which paths. The hook applies this before any load runs; loads and
// actions check again with requireRole where they touch data (defence in depth).
import type { Role } from '../db/schema';

export type Access = 'public' | 'signed-in' | Role[];

/** First matching prefix wins; keep the more specific prefixes first. */
const RULES: [prefix: string, access: Access][] = [
	['/sign-in', 'public'],
	['/sign-out', 'public'],
	['/invite/', 'public'],
	['/reset', 'public'],
	// Development pages 404 unless SHELLGATE_DEV_MAILBOX=1 (npm start and the tests).
	['/dev/', 'public'],
	['/health', 'public'],
	['/admin', ['admin']],
	['/api/', 'signed-in'],
	['/', 'signed-in']
];

export function accessFor(pathname: string): Access {
	for (const [prefix, access] of RULES) {
		if (prefix === '/' || pathname === prefix || pathname.startsWith(prefix.endsWith('/') ? prefix : prefix + '/')) return access;
	}
	return 'signed-in';
}
