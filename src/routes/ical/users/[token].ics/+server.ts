import { feedResponse, noFeed } from '$lib/server/feed-response';
import { fail } from '$lib/server/http';
import { feedRetryAfter } from '$lib/server/rate-limit';
import { userFeed, userForToken } from '$lib/server/services/feeds';
import type { RequestHandler } from './$types';

// The token in the path is the credential: no session, no cookie.
export const GET: RequestHandler = async ({ params, request, getClientAddress, setHeaders }) => {
	const wait = await feedRetryAfter(params.token, getClientAddress());
	if (wait) {
		setHeaders({ 'retry-after': String(wait) });
		fail(429, 'Too many requests for this feed; calendar clients need far fewer.');
	}
	const user = await userForToken(params.token);
	if (!user) noFeed();
	return feedResponse(request, await userFeed(user.id), 'boxwright.ics');
};
