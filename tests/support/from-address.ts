// A client whose requests leave from an address of its own. The app keys its throttles on
// the client's address as adapter-node reports it: the socket's peer unless ADDRESS_HEADER
// says a proxy in front may be believed, which the test app does not. So instead of a header
// the app would rightly ignore, each client binds its socket to its own loopback address:
// Linux routes all of 127.0.0.0/8 to `lo` and lets a socket bind to any address in it, and
// the app (on 127.0.0.1) sees that address as the peer. A throttling test can then spend an
// address's budget without touching 127.0.0.1, which every other test signs in from.
import { randomInt } from 'node:crypto';
import http from 'node:http';
import { baseUrl, Client } from './http';

const used = new Set<string>();

/** A loopback address no other client of this run has (never 127.0.0.1). */
export function uniqueAddress(): string {
	for (;;) {
		const address = `127.${randomInt(1, 255)}.${randomInt(0, 256)}.${randomInt(1, 255)}`;
		if (!used.has(address)) {
			used.add(address);
			return address;
		}
	}
}

/** A `Client` (tests/support/http.ts) whose requests leave over sockets bound to `address`. */
export class AddressClient extends Client {
	constructor(readonly address = uniqueAddress()) {
		super();
	}

	async request(
		method: string,
		path: string,
		body?: unknown,
		headers: Record<string, string> = {}
	): Promise<Response> {
		const h: Record<string, string> = { ...headers };
		let payload: string | undefined;
		if (body instanceof URLSearchParams) {
			payload = body.toString();
			h['content-type'] = 'application/x-www-form-urlencoded';
			h.origin = baseUrl; // SvelteKit's CSRF check for form posts
			h.accept ??= 'text/html'; // as a browser posts it, so actions answer with a page
		} else if (typeof body === 'string') {
			payload = body;
			h['content-type'] ??= 'application/json';
		} else if (body !== undefined) {
			payload = JSON.stringify(body);
			h['content-type'] = 'application/json';
		}
		if (payload !== undefined) h['content-length'] = String(Buffer.byteLength(payload));
		if (this.cookies.size) h.cookie = [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');

		const url = new URL(path, baseUrl);
		const {
			status,
			headers: raw,
			text
		} = await new Promise<{
			status: number;
			headers: http.IncomingHttpHeaders;
			text: string;
		}>((resolve, reject) => {
			const req = http.request(
				{
					host: url.hostname,
					port: url.port,
					path: url.pathname + url.search,
					method,
					headers: h,
					localAddress: this.address
				},
				(res) => {
					const chunks: Buffer[] = [];
					res.on('data', (c: Buffer) => chunks.push(c));
					res.on('end', () =>
						resolve({
							status: res.statusCode ?? 0,
							headers: res.headers,
							text: Buffer.concat(chunks).toString('utf8')
						})
					);
					res.on('error', reject);
				}
			);
			req.on('error', reject);
			req.end(payload);
		});

		for (const line of raw['set-cookie'] ?? []) {
			const [pair, ...attrs] = line.split(';');
			const at = pair.indexOf('=');
			const name = pair.slice(0, at).trim();
			const value = pair.slice(at + 1);
			const expired = attrs.some(
				(a) => /max-age=0/i.test(a) || /expires=thu, 01 jan 1970/i.test(a)
			);
			if (expired || value === '') this.cookies.delete(name);
			else this.cookies.set(name, value);
		}
		const responseHeaders = new Headers();
		for (const [key, value] of Object.entries(raw)) {
			if (key === 'set-cookie' || value === undefined) continue;
			responseHeaders.set(key, Array.isArray(value) ? value.join(', ') : value);
		}
		const empty = status === 204 || status === 304;
		return new Response(empty ? null : text, { status, headers: responseHeaders });
	}
}
