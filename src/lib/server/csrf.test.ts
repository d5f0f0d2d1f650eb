import { describe, expect, it } from 'vitest';
import { crossSiteRefusal } from './csrf';

const url = new URL('http://127.0.0.1:4174/api/v1/projects/p/parts/q/revisions');
const page = new URL('http://127.0.0.1:4174/revisions/3?/signOff');
const req = (headers: Record<string, string>, method = 'POST') => new Request(url, { method, headers });

describe('cross-site form posts', () => {
	it('lets a bearer-only API upload through without an Origin header', () => {
		expect(crossSiteRefusal(req({ 'content-type': 'multipart/form-data; boundary=x', authorization: 'Bearer sg_abc' }), url, false)).toBeNull();
	});
	it('refuses the same upload when a session cookie comes with it, or when there is no token', () => {
		expect(crossSiteRefusal(req({ 'content-type': 'multipart/form-data; boundary=x', authorization: 'Bearer sg_abc' }), url, true)).toMatch(/Cross-site POST/);
		expect(crossSiteRefusal(req({ 'content-type': 'multipart/form-data; boundary=x' }), url, false)).toMatch(/Cross-site POST/);
		expect(crossSiteRefusal(req({ 'content-type': 'multipart/form-data; boundary=x', authorization: 'Bearer ' }), url, false)).toMatch(/Cross-site POST/);
	});
	it('keeps the same-origin check for form posts to pages, even with a bearer header', () => {
		const r = new Request(page, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded', origin: 'http://evil.example', authorization: 'Bearer sg_abc' } });
		expect(crossSiteRefusal(r, page, true)).toBe('Cross-site POST form submissions are refused.');
		const ok = new Request(page, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded', origin: 'http://127.0.0.1:4174' } });
		expect(crossSiteRefusal(ok, page, true)).toBeNull();
	});
	it('leaves JSON bodies and reads alone', () => {
		expect(crossSiteRefusal(req({ 'content-type': 'application/json' }), url, true)).toBeNull();
		expect(crossSiteRefusal(new Request(url, { method: 'GET' }), url, true)).toBeNull();
	});
});
