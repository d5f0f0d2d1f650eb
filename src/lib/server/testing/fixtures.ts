// Test helpers for integration tests: demo data, users by role, and uploads from fixture files.
import { readFileSync } from 'node:fs';
import { Readable } from 'node:stream';
import { eq } from 'drizzle-orm';
import { seed } from '../../../../scripts/seed';
import { loadSessionUser, type SessionUser } from '../auth';
import type { Db } from '../db';
import { user } from '../db/schema';
import { ingestRevision, type IngestResult } from '../ingest';
import { spool } from '../storage';

export async function seededUsers(db: Db): Promise<Record<'admin' | 'engineer' | 'designer' | 'reviewer', SessionUser>> {
	await seed({ meshes: false });
	const out = {} as Record<string, SessionUser>;
	for (const role of ['admin', 'engineer', 'designer', 'reviewer']) {
		const [u] = await db.select().from(user).where(eq(user.email, `${role}@example.test`)).limit(1);
		out[role] = (await loadSessionUser(db, u.id))!;
	}
	return out as Record<'admin' | 'engineer' | 'designer' | 'reviewer', SessionUser>;
}

export async function uploadBytes(db: Db, u: SessionUser, bytes: Uint8Array, fileName: string, projectSlug = 'sensor-pods', partSlug = 'side-scan-pod'): Promise<IngestResult> {
	const spooled = await spool(Readable.from([Buffer.from(bytes)]), 1024 * 1024 * 1024);
	return ingestRevision(db, { user: u, projectSlug, partSlug, fileName, spooled, source: 'upload' });
}

export function fixture(name: string): Uint8Array {
	return new Uint8Array(readFileSync(`fixtures/${name}`));
}
