// Sign-in sends a person back through `next` only to a path on this site: every way of
// writing another host (a backslash, a tab or newline that URL parsing drops, a protocol-
// relative or absolute URL, an encoded slash, a script URL) ends on the dashboard instead.
import { afterAll, describe, expect, it } from 'vitest';
import { closeTestDb, makeUser } from '../support/db';
import { Client, baseUrl } from '../support/http';

afterAll(closeTestDb);

const site = new URL(baseUrl).origin;

// As they would sit in a link's query string, encoded or not.
const offSite = [
	'/%5Cevil.example',
	'/%5C%5Cevil.example',
	'%5C%5Cevil.example',
	'/%09/evil.example',
	'/%0A/evil.example',
	'/%0D%0A/evil.example',
	'//evil.example',
	'%2F%2Fevil.example',
	'/%2F%2Fevil.example',
	'///evil.example',
	'https://evil.example',
	'https:%2F%2Fevil.example',
	'HTTPS://evil.example/boxes',
	'javascript:alert(1)',
	'JavaScript%3Aalert(1)',
	'data:text/html,hi',
	'evil.example',
	'/%00/evil.example'
];

/** Where a form sign-in at `/signin?next=…` sends the browser. */
async function signInWith(query: string, who: { email: string; password: string }) {
	const r = await new Client().form(`/signin?next=${query}`, {
		email: who.email,
		password: who.password
	});
	expect(r.status, query).toBe(303);
	return r.headers.get('location') ?? '';
}

/** The location as a browser resolves it against this site. */
const resolved = (location: string) => new URL(location, baseUrl);

describe('next after sign-in', () => {
	it('stays on the site for every off-site variant', async () => {
		const user = await makeUser('member');
		for (const query of offSite) {
			const location = await signInWith(query, user);
			expect(location, query).toBe('/');
			expect(resolved(location).origin, query).toBe(site);
		}
	});

	it('follows a same-origin path with its query', async () => {
		const user = await makeUser('member');
		const next = '/calendar?box=2&view=week';
		const location = await signInWith(encodeURIComponent(next), user);
		expect(location).toBe(next);
		expect(resolved(location).origin).toBe(site);
		// An encoded slash inside a path stays a path on this site.
		const odd = await signInWith(encodeURIComponent('/%2F%2Fevil.example'), user);
		expect(resolved(odd).origin).toBe(site);
		expect(odd.startsWith('//')).toBe(false);
	});

	it('sends someone already signed in on the same way, and never off the site', async () => {
		const user = await makeUser('member');
		const client = new Client();
		await client.signIn(user.email, user.password);
		for (const query of ['/%5Cevil.example', '/%09/evil.example', '//evil.example']) {
			const r = await client.get(`/signin?next=${query}`);
			expect(r.status, query).toBe(303);
			expect(r.headers.get('location'), query).toBe('/');
		}
		const home = await client.get(`/signin?next=${encodeURIComponent('/account')}`);
		expect(home.headers.get('location')).toBe('/account');
	});
});
