// Applies the committed Drizzle migrations in drizzle/ to DATABASE_URL and says which were new.
import { existsSync, readFileSync } from 'node:fs';
import mysql from 'mysql2/promise';
import { drizzle } from 'drizzle-orm/mysql2';
import { migrate } from 'drizzle-orm/mysql2/migrator';

const MIGRATIONS_FOLDER = 'drizzle';
const MIGRATIONS_TABLE = '__drizzle_migrations';

interface JournalEntry {
	tag: string;
	when: number;
}

const url = process.env.DATABASE_URL;
if (!url) {
	console.error('migrate: DATABASE_URL is not set');
	process.exit(1);
}

const journalPath = `${MIGRATIONS_FOLDER}/meta/_journal.json`;
if (!existsSync(journalPath)) {
	console.log(`migrate: no migrations yet (${journalPath} is missing); nothing to apply`);
	process.exit(0);
}
const entries = (JSON.parse(readFileSync(journalPath, 'utf8')) as { entries: JournalEntry[] }).entries;

const connection = await mysql.createConnection({ uri: url, multipleStatements: false });
try {
	async function appliedTimes(): Promise<Set<number>> {
		const [tables] = await connection.query('SHOW TABLES LIKE ?', [MIGRATIONS_TABLE]);
		if ((tables as unknown[]).length === 0) return new Set();
		const [rows] = await connection.query(`SELECT created_at FROM \`${MIGRATIONS_TABLE}\``);
		return new Set((rows as { created_at: string | number }[]).map((r) => Number(r.created_at)));
	}
	const before = await appliedTimes();
	await migrate(drizzle(connection), { migrationsFolder: MIGRATIONS_FOLDER, migrationsTable: MIGRATIONS_TABLE });
	const after = await appliedTimes();
	const fresh = entries.filter((e) => after.has(e.when) && !before.has(e.when));
	for (const e of fresh) console.log(`migrate: applied ${e.tag}`);
	console.log(
		fresh.length === 0
			? `migrate: schema up to date (${entries.length} migration${entries.length === 1 ? '' : 's'})`
			: `migrate: applied ${fresh.length} of ${entries.length} migrations`
	);
} catch (e) {
	const err = e as Error & { cause?: { message?: string } };
	console.error(`migrate: failed: ${err.message.split('\n')[0]}${err.cause?.message ? `\nmigrate: cause: ${err.cause.message}` : ''}`);
	console.error('migrate: a local database made from older, since rewritten migrations can be reset by deleting .data/mariadb');
	process.exitCode = 1;
} finally {
	await connection.end();
}
