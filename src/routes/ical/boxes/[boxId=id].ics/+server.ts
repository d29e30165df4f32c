import { feedResponse, noFeed } from '$lib/server/feed-response';
import { fail } from '$lib/server/http';
import { feedRetryAfter } from '$lib/server/rate-limit';
import { boxFeed, userForToken } from '$lib/server/services/feeds';
import { idParam } from '$lib/server/params';
import type { RequestHandler } from './$types';

// Any active person may see any box's schedule, so a valid token is enough.
export const GET: RequestHandler = async ({
	params,
	url,
	request,
	getClientAddress,
	setHeaders
}) => {
	const token = url.searchParams.get('token') ?? '';
	const wait = await feedRetryAfter(token, getClientAddress());
	if (wait) {
		setHeaders({ 'retry-after': String(wait) });
		fail(429, 'Too many requests for this feed; calendar clients need far fewer.');
	}
	const user = await userForToken(token);
	const boxId = idParam(params.boxId);
	if (!user) noFeed();
	const feed = await boxFeed(boxId);
	if (!feed) noFeed();
	return feedResponse(request, feed, `box-${boxId}.ics`);
};
