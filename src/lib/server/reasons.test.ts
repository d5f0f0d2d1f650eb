import { describe, expect, it } from 'vitest';
import { failureReason, withoutPaths } from './reasons';

describe('reasons people read name no server path', () => {
	it('hides POSIX and Windows absolute paths and keeps the rest of the sentence', () => {
		expect(withoutPaths("ENOENT: no such file or directory, open '/srv/shellgate/data/ab/cd/abcd'")).toBe("ENOENT: no such file or directory, open '(server path)'");
		expect(withoutPaths('cannot read C:\\data\\files\\x.stl now')).toBe('cannot read (server path) now');
		expect(withoutPaths('The check gave up after 3 attempts. Last problem: 1/2 of the faces are open.')).toBe('The check gave up after 3 attempts. Last problem: 1/2 of the faces are open.');
	});

	it('says what went wrong with the stored file instead of the operating system code', () => {
		const missing = Object.assign(new Error("ENOENT: no such file or directory, open '/tmp/sg/ab/cd/x'"), { code: 'ENOENT' });
		expect(failureReason(missing)).toBe('the stored file is missing');
		expect(failureReason(Object.assign(new Error('x'), { name: 'NoSuchKey' }))).toBe('the stored file is missing');
		expect(failureReason(new Error('worker crashed reading /var/lib/x/y'))).toBe('worker crashed reading (server path)');
	});
});
