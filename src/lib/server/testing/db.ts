// Integration tests get a database of their own on the test MariaDB: created, migrated and dropped
// per test file, so files never see each other's rows. Needs DATABASE_URL (npm test sets it).
import { drizzle } from 'drizzle-orm/mysql2';
import { migrate } from 'drizzle-orm/mysql2/migrator';
import mysql from 'mysql2/promise';
import { closeDb } from '../db';

export async function useFreshDatabase(label: string): Promise<{ url: string; drop: () => Promise<void> }> {
	const base = process.env.DATABASE_URL_BASE ?? process.env.DATABASE_URL;
	if (!base) throw new Error('DATABASE_URL is not set: run the integration tests through `npm test`.');
	process.env.DATABASE_URL_BASE = base;
	const u = new URL(base);
	const name = `shellgate_test_${label.replace(/[^a-z0-9]/gi, '_').slice(0, 24)}_${Math.random().toString(36).slice(2, 8)}`;
	const admin = await mysql.createConnection({ uri: base });
	await admin.query(`CREATE DATABASE \`${name}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
	await admin.end();
	u.pathname = `/${name}`;
	const url = u.toString();
	const conn = await mysql.createConnection({ uri: url });
	await migrate(drizzle(conn), { migrationsFolder: 'drizzle' });
	await conn.end();
	await closeDb();
	process.env.DATABASE_URL = url;
	return {
		url,
		drop: async () => {
			await closeDb();
			const c = await mysql.createConnection({ uri: base });
			await c.query(`DROP DATABASE IF EXISTS \`${name}\``);
			await c.end();
			process.env.DATABASE_URL = base;
		}
	};
}
