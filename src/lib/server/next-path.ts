// Where sign-in sends a person afterwards: the page they were sent from (a QR label's
// phone page, a link in an e-mail), and never anywhere else.

const hasControl = (s: string) => [...s].some((c) => c.charCodeAt(0) < 0x20 || c === '\x7f');

/**
 * `next` as a path on this site (path, query and fragment), or "/" when it is missing or
 * would lead off the site: another origin, a protocol-relative "//host", a "/\host" that
 * browsers read as "//host", or control characters (tabs and newlines are dropped by URL
 * parsing, so "/\t/host" is "//host" too).
 */
export function safeNext(next: string | null | undefined, origin: string): string {
	if (!next || !next.startsWith('/') || next.includes('\\') || hasControl(next)) return '/';
	let url: URL;
	try {
		url = new URL(next, origin);
	} catch {
		return '/';
	}
	if (url.origin !== new URL(origin).origin) return '/';
	const path = url.pathname + url.search + url.hash;
	return path.startsWith('//') ? '/' : path;
}
