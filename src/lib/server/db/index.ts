// The mysql2 pool and the Drizzle handle. One pool per process, created on first use.
import { drizzle, type MySql2Database } from 'drizzle-orm/mysql2';
import mysql from 'mysql2/promise';
import { config } from '../config';
import * as schema from './schema';

export type Db = MySql2Database<typeof schema>;

let pool: mysql.Pool | undefined;
let handle: Db | undefined;

export function getPool(): mysql.Pool {
	pool ??= mysql.createPool({
		uri: config.databaseUrl,
		connectionLimit: 10,
		charset: 'utf8mb4',
		// Fail fast while MariaDB is down instead of queueing requests forever.
		connectTimeout: 5000,
		enableKeepAlive: true,
		dateStrings: false,
		timezone: 'Z'
	});
	return pool;
}

export function getDb(): Db {
	handle ??= drizzle(getPool(), { schema, mode: 'default' });
	return handle;
}

export async function closeDb(): Promise<void> {
	const p = pool;
	pool = undefined;
	handle = undefined;
	await p?.end();
}

export { schema };
