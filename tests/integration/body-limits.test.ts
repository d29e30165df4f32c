// Request bodies have a cap per route (issue 15, part 3; server/http-guards.ts): small by
// default, an upload's own cap on the routes that take a file. A body declared too large is
// refused from its Content-Length before it is sent; a body sent without a length (chunked)
// is refused once it passes the cap. Raw node:http is used where fetch would hide the
// difference (a declared length the client never sends, chunked transfer).
import http from 'node:http';
import { afterAll, describe, expect, it } from 'vitest';
import { closeTestDb, fitGloves, makeBox, makeUser } from '../support/db';
import { baseUrl, errorOf, signedIn } from '../support/http';

afterAll(closeTestDb);

const MB = 1024 * 1024;

type RawAnswer = { status: number; headers: http.IncomingHttpHeaders; body: string };

/** Waits for `answer`, or fails after `seconds` (a server still waiting for the body). */
function within<T>(seconds: number, what: string, answer: Promise<T>): Promise<T> {
	let timer: NodeJS.Timeout | undefined;
	const late = new Promise<never>((_, reject) => {
		timer = setTimeout(
			() => reject(new Error(`no answer to ${what} in ${seconds} s`)),
			seconds * 1000
		);
	});
	return Promise.race([answer, late]).finally(() => clearTimeout(timer));
}

/**
 * A POST that declares `declared` bytes but sends only `sent`, then waits for the answer
 * without sending the rest: only a server that refuses from the header answers at all.
 */
function declaredOnly(
	path: string,
	headers: Record<string, string>,
	declared: number,
	sent: string
): Promise<RawAnswer> {
	return within(
		10,
		`POST ${path} declaring ${declared} bytes`,
		new Promise<RawAnswer>((resolve, reject) => {
			const request = http.request(new URL(path, baseUrl), {
				method: 'POST',
				headers: { ...headers, 'content-length': String(declared), origin: baseUrl }
			});
			request.on('response', (response) => {
				let body = '';
				response.setEncoding('utf8');
				response.on('data', (chunk: string) => (body += chunk));
				response.on('end', () => {
					resolve({ status: response.statusCode ?? 0, headers: response.headers, body });
					request.destroy();
				});
			});
			request.on('error', reject);
			request.write(sent);
		})
	);
}

/**
 * A POST of `payload` in chunked transfer (no Content-Length), written with back-pressure and
 * stopped when the answer arrives.
 */
function chunked(
	path: string,
	headers: Record<string, string>,
	payload: Buffer
): Promise<RawAnswer & { sent: number }> {
	return within(
		60,
		`chunked POST ${path}`,
		new Promise((resolve, reject) => {
			const request = http.request(new URL(path, baseUrl), {
				method: 'POST',
				headers: { ...headers, 'transfer-encoding': 'chunked', origin: baseUrl }
			});
			let sent = 0;
			let answered = false;
			const pump = () => {
				while (!answered && sent < payload.length) {
					const chunk = payload.subarray(sent, sent + 64 * 1024);
					sent += chunk.length;
					if (!request.write(chunk)) return void request.once('drain', pump);
				}
				request.end();
			};
			request.on('response', (response) => {
				answered = true;
				let body = '';
				response.setEncoding('utf8');
				response.on('data', (c: string) => (body += c));
				response.on('end', () =>
					resolve({ status: response.statusCode ?? 0, headers: response.headers, body, sent })
				);
			});
			request.on('error', (e) => (answered ? undefined : reject(e)));
			pump();
		})
	);
}

/** The session cookie of a fresh sign-in, for the raw requests above. */
async function sessionCookie(user: { email: string; password: string }) {
	const response = await fetch(`${baseUrl}/api/session`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify({ email: user.email, password: user.password })
	});
	expect(response.status).toBe(200);
	return response.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.join('; ');
}

const shapeOf = (body: string) => JSON.parse(body) as { error: { code: string; message: string } };

describe('the sign-in route takes only a small body', () => {
	it('a 6 MB JSON body to POST /api/session is refused by its declared length, before it is sent', async () => {
		const answer = await declaredOnly(
			'/api/session',
			{ 'content-type': 'application/json' },
			6 * MB,
			'{"email":"a@example.org","password":"'
		);
		expect(answer.status).toBe(413);
		expect(answer.headers['content-type']).toContain('application/json');
		const { error } = shapeOf(answer.body);
		expect(error.code).toBe('too_large');
		expect(error.message).toMatch(/larger than/);
	});

	it('a 6 MB form to /signin is refused the same way: a page, or the form’s answer', async () => {
		const form = { 'content-type': 'application/x-www-form-urlencoded' };
		const page = await declaredOnly('/signin', { ...form, accept: 'text/html' }, 6 * MB, 'email=');
		expect(page.status).toBe(413);
		expect(page.headers['content-type']).toContain('text/html');
		expect(page.body).toMatch(/larger than/);
		expect(page.headers['x-content-type-options']).toBe('nosniff');

		// As the page's enhanced form posts it: an action's refusal it shows on the form.
		const enhanced = await declaredOnly(
			'/signin',
			{ ...form, accept: 'application/json', 'x-sveltekit-action': 'true' },
			6 * MB,
			'email='
		);
		expect(enhanced.status).toBe(413);
		const result = JSON.parse(enhanced.body) as { type: string; status: number; data: string };
		expect(result).toMatchObject({ type: 'failure', status: 413 });
		expect(result.data).toMatch(/larger than/);

		// A named action of the page too (the form's `?/default`).
		const named = await declaredOnly(
			'/signin?/default',
			{ ...form, accept: 'text/html' },
			6 * MB,
			'email='
		);
		expect(named.status).toBe(413);
	});

	it('a chunked 2 MB body to POST /api/session is cut off past the cap: 413, not a 400 or a 500', async () => {
		const answer = await chunked(
			'/api/session',
			{ 'content-type': 'application/json' },
			Buffer.alloc(2 * MB, ' ')
		);
		expect(answer.status).toBe(413);
		expect(shapeOf(answer.body).error.code).toBe('too_large');

		const form = await chunked(
			'/signin',
			{ 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' },
			Buffer.alloc(2 * MB, 'a')
		);
		expect(form.status).toBe(413);
	});

	it('an ordinary sign-in, with and without a length, still works', async () => {
		const user = await makeUser('member');
		const body = JSON.stringify({ email: user.email, password: user.password });
		const withLength = await fetch(`${baseUrl}/api/session`, {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body
		});
		expect(withLength.status).toBe(200);
		const streamed = await fetch(`${baseUrl}/api/session`, {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: new Blob([body]).stream(),
			duplex: 'half'
		} as RequestInit & { duplex: 'half' });
		expect(streamed.status).toBe(200);
	});

	it('other API routes keep the small default too', async () => {
		const member = await signedIn(await makeUser('member'));
		const big = await member.post('/api/calc/flush', {
			boxVolumeL: 1000,
			gloveVolumeL: 1,
			residualVolumeL: 0.1,
			cycles: 3,
			padding: 'x'.repeat(200 * 1024)
		});
		expect(big.status).toBe(413);
		expect((await errorOf(big)).code).toBe('too_large');
	});
});

describe('the upload routes keep their own caps', () => {
	/** A PNG signature followed by `bytes` of zeros: an image by its content, of that size. */
	const photo = (bytes: number) =>
		new Blob([Buffer.from('89504e470d0a1a0a', 'hex'), new Uint8Array(bytes)], {
			type: 'image/png'
		});
	const damageForm = (image: Blob, extra: Record<string, string> = {}) => {
		const form = new FormData();
		form.set('location', 'fingertip');
		form.set('hand', 'left');
		form.set('holeSizeMm', '3');
		for (const [k, v] of Object.entries(extra)) form.set(k, v);
		form.set('photo', image, 'hole.png');
		return form;
	};

	it('a 4 MB photo is accepted on the damage page and on the box’s phone page', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const member = await signedIn(await makeUser('member'));
		const onPort = await member.request(
			'POST',
			`/boxes/${boxId}/ports/${left.id}/damage?/report`,
			damageForm(photo(4 * MB))
		);
		expect(onPort.status).toBe(200);
		expect(await onPort.text()).toContain('temporary patch');

		const atBox = await member.request(
			'POST',
			`/boxes/${boxId}/here?/damage`,
			damageForm(photo(4 * MB), { portId: String(left.id) })
		);
		expect(atBox.status).toBe(200);
	});

	it('a photo over 5 MB is refused by the photo’s own rule, not by the small default', async () => {
		const boxId = await makeBox();
		const [left] = await fitGloves(boxId);
		const member = await signedIn(await makeUser('member'));
		const path = `/boxes/${boxId}/ports/${left.id}/damage?/report`;
		// Just over: the action reads it and answers on the field.
		const over = await member.request('POST', path, damageForm(photo(5 * MB)));
		expect(over.status).toBe(400);
		expect(await over.text()).toContain('larger than 5 MB');
		// Far over: refused from its length, with the same words.
		const far = await member.request('POST', path, damageForm(photo(8 * MB)));
		expect(far.status).toBe(413);
		expect(await far.text()).toContain('The photo is larger than 5 MB.');
		// The page's other action has only the small default.
		const other = await member.request(
			'POST',
			`/boxes/${boxId}/ports/${left.id}/damage?/outageNow`,
			damageForm(photo(1 * MB))
		);
		expect(other.status).toBe(413);
	});

	it('the sensor-log import still takes a 20 MB file, with and without a length', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		// One reading a minute from a fixed day in the past, to just over 20 MB.
		const start = Date.UTC(2024, 0, 1);
		const lines = ['time,O2 ppm,H2O ppm'];
		let size = 0;
		for (let i = 0; size < 20 * MB; i++) {
			const line = `${new Date(start + i * 60_000).toISOString()},${(0.3 + (i % 7) / 10).toFixed(2)},0.20`;
			lines.push(line);
			size += line.length + 1;
		}
		const csv = lines.join('\n') + '\n';
		expect(csv.length).toBeGreaterThan(20 * MB);
		const path = `/api/boxes/${boxId}/readings/import?preview=1`;

		const withLength = await manager.request('POST', path, csv, { 'content-type': 'text/csv' });
		expect(withLength.status).toBe(200);
		const { preview } = (await withLength.json()) as { preview: { lines: number } };
		expect(preview.lines).toBe(lines.length - 1);

		// The same file in chunked transfer: counted as it arrives, and let through whole.
		const user = await makeUser('manager');
		const streamed = await chunked(
			path,
			{ 'content-type': 'text/csv', cookie: await sessionCookie(user) },
			Buffer.from(csv)
		);
		expect(streamed.status).toBe(200);
		expect((JSON.parse(streamed.body) as { preview: { lines: number } }).preview.lines).toBe(
			lines.length - 1
		);
	}, 90_000);
});
