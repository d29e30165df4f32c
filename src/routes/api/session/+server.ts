import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { endSession, startSession } from '$lib/server/auth';
import { fail, readJson } from '$lib/server/http';
import { checkSignIn, profile, signInMessages } from '$lib/server/services/accounts';
import { deviceToken, rememberDevice } from '$lib/server/rate-limit';
import { signInSchema } from '$lib/validation/account';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ request, cookies, getClientAddress, setHeaders }) => {
	const { email, password } = await readJson(request, signInSchema);
	// serve(): a sign-in the rate limit store cannot count is a 503 in the contract's shape.
	const result = await serve(() =>
		checkSignIn(email, password, getClientAddress(), deviceToken(cookies))
	);
	if (result.kind === 'throttled') {
		setHeaders({ 'retry-after': String(result.retryAfterSeconds) });
		fail(429, signInMessages.throttled(result.retryAfterSeconds), {
			retryAfterSeconds: result.retryAfterSeconds
		});
	}
	if (result.kind === 'invalid')
		fail(401, signInMessages.invalid, undefined, 'invalid_credentials');
	if (result.kind !== 'ok') fail(403, signInMessages[result.kind]);
	// The session this client held before ends with the new one (auth.ts).
	await startSession(cookies, result.userId);
	await rememberDevice(cookies, email);
	return json({ user: await profile(result.userId) });
};

export const DELETE: RequestHandler = async ({ locals, cookies }) => {
	await endSession(cookies, locals.session?.id);
	return new Response(null, { status: 204 });
};
