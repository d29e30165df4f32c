// Security headers on what the app answers (issue 15, part 2): the Content-Security-Policy
// from `kit.csp` on every page, the headers of server/http-guards.ts on every response, and
// `Cache-Control: private, no-store` on whatever a signed-in person is shown, while the
// routes that choose their own caching (calendar feeds) keep it.
import { afterAll, describe, expect, it } from 'vitest';
import { closeTestDb, makeBox, makeUser } from '../support/db';
import { Client, baseUrl, signedIn } from '../support/http';

afterAll(closeTestDb);

/** The directives of a Content-Security-Policy header, by name. */
function directives(header: string | null): Map<string, string[]> {
	const map = new Map<string, string[]>();
	for (const part of (header ?? '').split(';')) {
		const [name, ...values] = part.trim().split(/\s+/);
		if (name) map.set(name.toLowerCase(), values);
	}
	return map;
}

/** Checks the headers every page carries; answers the page's text. */
async function expectPageHeaders(response: Response, path: string) {
	const h = response.headers;
	expect(h.get('content-type'), path).toContain('text/html');
	const csp = directives(h.get('content-security-policy'));
	const scripts = csp.get('script-src') ?? [];
	expect(scripts, path).toContain("'self'");
	expect(scripts, path).not.toContain("'unsafe-inline'");
	expect(scripts, path).not.toContain("'unsafe-eval'");
	const nonce = scripts.find((s) => s.startsWith("'nonce-"));
	expect(nonce, `${path}: a nonce in script-src`).toBeTruthy();
	expect(csp.get('default-src'), path).toEqual(["'self'"]);
	expect(csp.get('frame-ancestors'), path).toEqual(["'none'"]);
	expect(csp.get('object-src'), path).toEqual(["'none'"]);
	expect(csp.get('base-uri'), path).toEqual(["'self'"]);
	expect(csp.get('form-action'), path).toEqual(["'self'"]);
	expect(h.get('x-content-type-options'), path).toBe('nosniff');
	expect(h.get('referrer-policy'), path).toMatch(/^(same-origin|strict-origin-when-cross-origin)$/);
	expect(h.get('x-frame-options'), path).toBe('DENY');
	expect(h.get('permissions-policy'), path).toContain('camera=()');
	const text = await response.text();
	// The page's own inline script carries the header's nonce, so it is the one allowed to run.
	const value = nonce!.slice("'nonce-".length, -1);
	expect(text, path).toContain(`nonce="${value}"`);
	// Every inline script that runs (no src, not JSON data) carries it.
	for (const tag of text.match(/<script(?![^>]*\b(?:src=|type="application\/json"))[^>]*>/g) ?? [])
		expect(tag, path).toContain(`nonce="${value}"`);
	return text;
}

describe('headers on pages', () => {
	it('every page a signed-out visitor reaches carries the policy and the headers', async () => {
		const client = new Client();
		for (const path of ['/signin', '/register', '/reset', '/signin?next=/calendar']) {
			const r = await client.get(path);
			expect(r.status, path).toBe(200);
			await expectPageHeaders(r, path);
		}
		// An error page is a page too.
		const missing = await client.get('/no-such-page');
		expect(missing.status).toBe(404);
		await expectPageHeaders(missing, '/no-such-page');
		// A redirect to sign in carries the headers that do not depend on the body.
		const protectedPage = await client.get('/calendar');
		expect([302, 303, 307]).toContain(protectedPage.status);
		expect(protectedPage.headers.get('x-content-type-options')).toBe('nosniff');
		expect(protectedPage.headers.get('x-frame-options')).toBe('DENY');
	});

	it('a new nonce on every answer', async () => {
		const client = new Client();
		const nonces = new Set<string>();
		for (let i = 0; i < 3; i++) {
			const r = await client.get('/signin');
			const scripts = directives(r.headers.get('content-security-policy')).get('script-src');
			nonces.add(scripts?.find((s) => s.startsWith("'nonce-")) ?? '');
			await r.body?.cancel();
		}
		expect(nonces.size).toBe(3);
	});

	it('signed-in pages carry the policy and are never stored by a cache', async () => {
		const boxId = await makeBox();
		const member = await signedIn(await makeUser('member'));
		const manager = await signedIn(await makeUser('manager'));
		const pages: [Client, string][] = [
			[member, '/'],
			[member, '/calendar'],
			[member, '/account'],
			[member, `/boxes/${boxId}`],
			[member, `/boxes/${boxId}/here`],
			[member, '/calc'],
			[manager, '/'],
			[manager, '/manage/labels'],
			[manager, '/reports'],
			[manager, '/dev/mail'],
			[manager, '/manage/approvals']
		];
		for (const [client, path] of pages) {
			const r = await client.get(path);
			expect(r.status, path).toBe(200);
			expect(r.headers.get('cache-control'), path).toBe('private, no-store');
			await expectPageHeaders(r, path);
		}
		// The data a page loads on navigation is the same person's data.
		const data = await member.get('/account/__data.json');
		expect(data.status).toBe(200);
		expect(data.headers.get('cache-control')).toBe('private, no-store');
		expect(data.headers.get('x-content-type-options')).toBe('nosniff');
	});

	it('the answer that signs a person in is never stored', async () => {
		const user = await makeUser('member');
		const client = new Client();
		const signIn = await client.post('/api/session', {
			email: user.email,
			password: user.password
		});
		expect(signIn.status).toBe(200);
		expect(signIn.headers.get('cache-control')).toBe('private, no-store');
	});
});

describe('headers on API answers and feeds', () => {
	it('an API answer to a signed-in person is private and never stored; every answer is nosniff', async () => {
		const member = await signedIn(await makeUser('member'));
		const mine = await member.get('/api/me/notifications');
		expect(mine.status).toBe(200);
		expect(mine.headers.get('cache-control')).toBe('private, no-store');
		expect(mine.headers.get('x-content-type-options')).toBe('nosniff');
		expect(mine.headers.get('x-frame-options')).toBe('DENY');
		// Refusals too.
		const refused = await new Client().get('/api/me/notifications');
		expect(refused.status).toBe(401);
		expect(refused.headers.get('x-content-type-options')).toBe('nosniff');
		expect(refused.headers.get('referrer-policy')).toBeTruthy();
		const health = await fetch(`${baseUrl}/api/health`);
		expect(health.headers.get('x-content-type-options')).toBe('nosniff');
	});

	it('calendar feeds keep their own caching and their 304, also for a signed-in browser', async () => {
		const member = await makeUser('member');
		const client = await signedIn(member);
		const created = await client.post('/api/me/feed-token');
		expect(created.status).toBe(201);
		const { userFeedUrl } = (await created.json()) as { userFeedUrl: string };
		const path = new URL(userFeedUrl).pathname;

		const first = await fetch(baseUrl + path);
		expect(first.status).toBe(200);
		expect(first.headers.get('cache-control')).toBe('private, max-age=300');
		expect(first.headers.get('x-content-type-options')).toBe('nosniff');
		const etag = first.headers.get('etag');
		expect(etag).toBeTruthy();
		await first.text();
		const again = await fetch(baseUrl + path, { headers: { 'if-none-match': etag! } });
		expect(again.status).toBe(304);

		// Opened in the browser the person is signed in with: still the feed's own rule.
		const inBrowser = await client.get(path);
		expect(inBrowser.status).toBe(200);
		expect(inBrowser.headers.get('cache-control')).toBe('private, max-age=300');
	});
});
