import type { ParamMatcher } from '@sveltejs/kit';

/** A record id in a path: a positive whole number that fits an INT column. Anything else is a 404. */
export const match: ParamMatcher = (param) =>
	/^[1-9]\d{0,9}$/.test(param) && Number(param) <= 2_147_483_647;
