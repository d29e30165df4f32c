// A small HTTP client for integration tests against the app that `npm test` serves.
export const baseUrl = process.env.APP_URL ?? 'http://127.0.0.1:3100';

export class Client {
	protected cookies = new Map<string, string>();

	get signedIn(): boolean {
		return this.cookies.has('bw_session');
	}

	/** A cookie's value as the app last set it. */
	cookie(name: string): string | undefined {
		return this.cookies.get(name);
	}

	/** Puts a cookie in the jar, as a browser holding it would send it. */
	setCookie(name: string, value: string) {
		this.cookies.set(name, value);
	}

	async request(
		method: string,
		path: string,
		body?: unknown,
		headers: Record<string, string> = {}
	): Promise<Response> {
		const init: RequestInit = { method, redirect: 'manual', headers: { ...headers } };
		const h = init.headers as Record<string, string>;
		if (this.cookies.size) h.cookie = [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
		if (body instanceof FormData) {
			init.body = body;
			h.origin = baseUrl;
			h.accept ??= 'text/html';
		} else if (body instanceof URLSearchParams) {
			init.body = body;
			h['content-type'] = 'application/x-www-form-urlencoded';
			h.origin = baseUrl; // SvelteKit's CSRF check for form posts
			h.accept ??= 'text/html'; // as a browser posts it, so actions answer with a page
		} else if (typeof body === 'string') {
			init.body = body;
			h['content-type'] ??= 'application/json';
		} else if (body !== undefined) {
			init.body = JSON.stringify(body);
			h['content-type'] = 'application/json';
		}
		const response = await fetch(baseUrl + path, init);
		for (const line of response.headers.getSetCookie()) {
			const [pair, ...attrs] = line.split(';');
			const [name, value] = pair.split('=');
			const expired = attrs.some(
				(a) => /max-age=0/i.test(a) || /expires=thu, 01 jan 1970/i.test(a)
			);
			if (expired || value === '') this.cookies.delete(name.trim());
			else this.cookies.set(name.trim(), value);
		}
		return response;
	}

	get(path: string) {
		return this.request('GET', path);
	}
	post(path: string, body?: unknown) {
		return this.request('POST', path, body);
	}
	delete(path: string) {
		return this.request('DELETE', path);
	}
	/** Posts a form to a SvelteKit action, as a browser without JavaScript would. */
	form(path: string, fields: Record<string, string | number>) {
		const params = new URLSearchParams();
		for (const [k, v] of Object.entries(fields)) params.set(k, String(v));
		return this.request('POST', path, params);
	}

	async signIn(email: string, password: string) {
		const response = await this.post('/api/session', { email, password });
		if (response.status !== 200) {
			throw new Error(`sign-in as ${email} gave ${response.status}: ${await response.text()}`);
		}
		return response;
	}
}

/** Reads the error shape of DESIGN.md and checks it is that shape. */
export async function errorOf(response: Response) {
	const body = (await response.json()) as {
		error: { code: string; message: string; details?: Record<string, unknown> };
	};
	if (
		!body.error ||
		typeof body.error.code !== 'string' ||
		typeof body.error.message !== 'string'
	) {
		throw new Error(`not the error shape: ${JSON.stringify(body)}`);
	}
	return body.error;
}

/** A client signed in as the given user. */
export async function signedIn(user: { email: string; password: string }) {
	const client = new Client();
	await client.signIn(user.email, user.password);
	return client;
}
