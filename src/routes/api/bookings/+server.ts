import { isHttpError, json } from '@sveltejs/kit';
import { respond } from '$lib/server/api';
import { readSession, sessionToken, SessionCheck } from '$lib/server/auth';
import { notSignedIn, requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { createSeries } from '$lib/server/services/bookings';
import { book } from '$lib/server/services/booking-decision';
import { toPublic } from '$lib/server/services/calendar';
import { bookingSchema } from '$lib/validation/bookings';
import type { RequestHandler } from './$types';

/**
 * One booking (`{booking}`), or with `repeatWeeks` a weekly series (`{created, refused}`).
 *
 * The route everybody hits at once, so the session hook leaves its session check to it
 * (hooks.server.ts): a single booking checks the session inside the booking decision's
 * first round trip (booking-decision.ts). The answers are those of any API route, in the
 * same order: 401 without a valid session, before 400 for a bad body.
 */
export const POST: RequestHandler = async (event) => {
	const token = sessionToken(event.cookies);
	if (!token) notSignedIn();
	let body;
	try {
		body = await readJson(event.request, bookingSchema);
	} catch (e) {
		// A bad body from someone not signed in is a 401 all the same.
		if (isHttpError(e)) await signedIn(event);
		throw e;
	}
	const { repeatWeeks, ...input } = body;
	if (repeatWeeks !== undefined) {
		const user = await signedIn(event);
		return respond(
			() => createSeries(user, input, repeatWeeks),
			({ created, refused }) =>
				json({ created: created.map((b) => toPublic(b)), refused }, { status: 201 })
		);
	}
	const check = new SessionCheck(event.cookies, token);
	const answer = await respond(
		() => book(check, input, new Date()),
		(booking) => json({ booking: toPublic(booking) }, { status: 201 })
	);
	event.locals.user = check.user;
	event.locals.session = check.session;
	await check.settle();
	return answer;
};

/** The session check the hook would have made, with its 401; the signed-in member. */
async function signedIn(event: Parameters<RequestHandler>[0]) {
	const { user, session } = await readSession(event.cookies);
	event.locals.user = user;
	event.locals.session = session;
	return requireRole(event, 'member');
}
