import { fail } from './http';
import type { Feed } from './services/feeds';

/** The feed as text/calendar, with ETag and Last-Modified, or 304 when the client has it. */
export function feedResponse(request: Request, feed: Feed, filename: string): Response {
	const headers = {
		'content-type': 'text/calendar; charset=utf-8',
		'content-disposition': `inline; filename="${filename}"`,
		etag: feed.etag,
		'last-modified': feed.lastModified.toUTCString(),
		'cache-control': 'private, max-age=300'
	};
	const match = request.headers.get('if-none-match');
	const since = request.headers.get('if-modified-since');
	const unchanged = match
		? match.split(',').some((t) => t.trim() === feed.etag)
		: since !== null &&
			!Number.isNaN(Date.parse(since)) &&
			Date.parse(since) >= feed.lastModified.getTime();
	if (unchanged) return new Response(null, { status: 304, headers });
	return new Response(feed.render(), { headers });
}

/** The one answer for any token that does not open a feed: no hint why. */
export function noFeed(): never {
	fail(404, 'No such calendar feed.');
}
