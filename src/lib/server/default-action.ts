// `POST /page?/default`: SvelteKit reserves the name "default" and throws a plain Error on
// it (a 500) instead of answering like any other action name. The query asks for the
// page's default action, so it gets exactly that: the marker is dropped from the request's
// URL before SvelteKit picks the action. A page with only named actions then answers 404
// ("No action with name 'default'"), as it does for any other name it lacks.
import type { Handle } from '@sveltejs/kit';

/** The URL without a leading `/default` action marker, or null when it names no such action. */
export function withoutDefaultAction(href: string): string | null {
	const url = new URL(href);
	// SvelteKit reads the first query key starting with "/" as the action's name.
	const marker = [...url.searchParams.keys()].find((key) => key.startsWith('/'));
	if (marker !== '/default') return null;
	url.searchParams.delete('/default');
	return url.href;
}

export const defaultAction: Handle = async ({ event, resolve }) => {
	if (event.request.method !== 'POST') return resolve(event);
	const href = withoutDefaultAction(event.request.url);
	if (!href) return resolve(event);
	const { request } = event;
	const init: RequestInit & { duplex: 'half' } = {
		method: request.method,
		headers: request.headers,
		body: request.body,
		signal: request.signal,
		duplex: 'half'
	};
	event.request = new Request(href, init);
	return resolve(event);
};
