import { describe, expect, it } from 'vitest';
import { isForbiddenCrossSiteForm } from '../../../src/lib/server/csrf';

const url = (path: string) => new URL(`http://127.0.0.1:4300${path}`);
const post = (path: string, headers: Record<string, string>) =>
	new Request(url(path), { method: 'POST', headers, body: 'a=1' });

describe('cross-site form check', () => {
	it('allows same-origin form posts', () => {
		expect(
			isForbiddenCrossSiteForm(
				post('/signin', { 'content-type': 'application/x-www-form-urlencoded', origin: 'http://127.0.0.1:4300' }),
				url('/signin')
			)
		).toBe(false);
	});
	it('refuses a form post from another origin, or with no Origin (as SvelteKit does)', () => {
		expect(
			isForbiddenCrossSiteForm(
				post('/signin', { 'content-type': 'application/x-www-form-urlencoded', origin: 'http://evil.test' }),
				url('/signin')
			)
		).toBe(true);
		expect(
			isForbiddenCrossSiteForm(
				post('/admin/users', { 'content-type': 'multipart/form-data; boundary=x' }),
				url('/admin/users')
			)
		).toBe(true);
		expect(
			isForbiddenCrossSiteForm(
				post('/auth/signin/nodemailer', { 'content-type': 'text/plain' }),
				url('/auth/signin/nodemailer')
			)
		).toBe(true);
	});
	it('leaves JSON requests and GETs to the routes (they check the session themselves)', () => {
		expect(
			isForbiddenCrossSiteForm(post('/api/v1/watches', { 'content-type': 'application/json' }), url('/api/v1/watches'))
		).toBe(false);
		expect(isForbiddenCrossSiteForm(new Request(url('/signin')), url('/signin'))).toBe(false);
	});
	it('exempts only the one-click unsubscribe endpoint (RFC 8058 section 3.1: the POST comes with no cookies, often no Origin)', () => {
		const body = { 'content-type': 'application/x-www-form-urlencoded' };
		expect(isForbiddenCrossSiteForm(post('/unsubscribe/abc', body), url('/unsubscribe/abc'))).toBe(false);
		expect(isForbiddenCrossSiteForm(post('/unsubscribed', body), url('/unsubscribed'))).toBe(true);
	});
});
