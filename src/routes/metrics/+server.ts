import { error } from '@sveltejs/kit';
import { config } from '$lib/server/config';
import { errorResponse } from '$lib/server/http';
import { metricsAccess } from '$lib/server/observability';
import { metricsText } from '$lib/server/services/health';
import type { RequestHandler } from './$types';

/** Prometheus text for a scraper holding METRICS_TOKEN; without the setting, nothing here. */
export const GET: RequestHandler = async ({ request }) => {
	const access = metricsAccess(config.metricsToken, request.headers.get('authorization'));
	if (access === 'hidden') error(404, { message: 'Not found.', code: 'not_found' });
	if (access === 'refused') {
		const refused = errorResponse(401, 'The metrics need their bearer token.', 'unauthenticated');
		refused.headers.set('www-authenticate', 'Bearer realm="metrics"');
		return refused;
	}
	const { contentType, body } = await metricsText();
	return new Response(body, {
		headers: { 'content-type': contentType, 'cache-control': 'no-store' }
	});
};
