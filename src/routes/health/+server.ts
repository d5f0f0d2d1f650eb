import { json } from '@sveltejs/kit';
import { sql } from 'drizzle-orm';
import { getDb } from '$lib/server/db';

export async function GET() {
	try {
		await getDb().execute(sql`SELECT 1`);
		return json({ ok: true, database: 'up' });
	} catch {
		return json({ ok: false, database: 'down', message: 'The database is not reachable.' }, { status: 503 });
	}
}
