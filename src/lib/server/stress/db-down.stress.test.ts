// While MariaDB is down, Drizzle throws "Failed query: …" with the driver's connection error as its
// cause; the API must still answer 503 with a message, not a logged 500.
import { describe, expect, it } from 'vitest';
import { handleApi } from '../api/respond';

const wrapped = (code: string) => Object.assign(new Error('Failed query: select 1\nparams: '), { cause: Object.assign(new Error(`connect ${code}`), { code }) });

describe('API answers while the database is unreachable', () => {
	for (const code of ['ECONNREFUSED', 'PROTOCOL_CONNECTION_LOST', 'ECONNRESET', 'ETIMEDOUT']) {
		it(`answers 503 JSON for a query error caused by ${code}`, async () => {
			const res = await handleApi(async () => {
				throw wrapped(code);
			});
			expect(res.status).toBe(503);
			expect(((await res.json()) as { message: string }).message).toMatch(/database is not reachable/);
		});
	}
});

describe('error logs', () => {
	it('leave out query parameters, which can be session ids or token hashes', async () => {
		const { loggable } = await import('../api/respond');
		const e = new Error('Failed query: select * from session where id = ?\nparams: npal4uliaq7pv7mmhczwefpf7jcnv5w4kwdycnqb');
		const text = loggable(e);
		expect(text).toContain('Failed query');
		expect(text).not.toContain('npal4uliaq7pv7mmhczwefpf7jcnv5w4kwdycnqb');
	});
});
