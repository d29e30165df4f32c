import { checkEndpoint } from '$lib/server/check-endpoint';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) => checkEndpoint(event, 'in');
