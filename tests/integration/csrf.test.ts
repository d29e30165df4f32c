// Cross-site requests: a form on another site posting to the API is refused in the contract's
// error shape (not SvelteKit's plain text), a cross-site post to a page's action is refused
// with a page, and this site's own forms and JSON clients go through.
import { afterAll, describe, expect, it } from 'vitest';
import { closeTestDb, makeUser } from '../support/db';
import { baseUrl, errorOf } from '../support/http';

afterAll(closeTestDb);

const evil = 'https://evil.example';

function post(path: string, body: BodyInit, headers: Record<string, string>) {
	return fetch(baseUrl + path, { method: 'POST', redirect: 'manual', body, headers });
}

const form = (fields: Record<string, string>) => new URLSearchParams(fields).toString();
const urlencoded = 'application/x-www-form-urlencoded';

describe('cross-site requests', () => {
	it('refuses a cross-site form post to the API in the contract’s shape', async () => {
		const user = await makeUser('member');
		const fields = form({ email: user.email, password: user.password });
		for (const [accept, type] of [
			['*/*', urlencoded],
			['text/html', urlencoded],
			['application/json', 'text/plain']
		]) {
			const r = await post('/api/session', fields, { origin: evil, 'content-type': type, accept });
			expect(r.status, `${type} ${accept}`).toBe(403);
			expect(r.headers.get('content-type')).toMatch(/^application\/json/);
			expect(r.headers.get('set-cookie')).toBeNull();
			const refusal = await errorOf(r);
			expect(refusal.code).toBe('csrf');
			expect(refusal.message).toMatch(/cross-site/i);
		}

		const multipart = new FormData();
		multipart.set('title', 'Not from here');
		const upload = await fetch(`${baseUrl}/api/documents`, {
			method: 'POST',
			body: multipart,
			headers: { origin: evil }
		});
		expect(upload.status).toBe(403);
		expect((await errorOf(upload)).code).toBe('csrf');
	});

	it('refuses JSON a browser says comes from another site, and lets a JSON client through', async () => {
		const user = await makeUser('member');
		const body = JSON.stringify({ email: user.email, password: user.password });
		const foreign = await post('/api/session', body, {
			origin: evil,
			'content-type': 'application/json'
		});
		expect(foreign.status).toBe(403);
		expect((await errorOf(foreign)).code).toBe('csrf');

		const client = await post('/api/session', body, { 'content-type': 'application/json' });
		expect(client.status).toBe(200);
	});

	it('still refuses a cross-site form post to a page’s action, and one without an Origin', async () => {
		const user = await makeUser('member');
		const fields = form({ email: user.email, password: user.password });
		const crossSite = await post('/signin', fields, {
			origin: evil,
			'content-type': urlencoded,
			accept: 'text/html'
		});
		expect(crossSite.status).toBe(403);
		expect(crossSite.headers.get('set-cookie')).toBeNull();
		expect(await crossSite.text()).toMatch(/cross-site/i);

		const noOrigin = await post('/signin', fields, { 'content-type': urlencoded });
		expect(noOrigin.status).toBe(403);

		const ownSite = await post('/signin', fields, {
			origin: new URL(baseUrl).origin,
			'content-type': urlencoded,
			accept: 'text/html'
		});
		expect(ownSite.status).toBe(303);
	});
});
