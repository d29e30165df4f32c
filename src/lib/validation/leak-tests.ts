import { z } from 'zod';

const n = (field: string) => z.number({ error: `${field} must be a number.` }).finite();
const note = z.string().trim().max(500, 'Use at most 500 characters.').optional();

/** The leak-rate calculator's two shapes, plus gauge and barometer readings as read off. */
export const leakTestSchema = z.discriminatedUnion(
	'method',
	[
		z.object({
			method: z.literal('oxygen'),
			o2RisePpm: n('o2RisePpm'),
			minutes: n('minutes'),
			note
		}),
		z.object({
			method: z.literal('pressure'),
			p1Pa: n('p1Pa'),
			p2Pa: n('p2Pa'),
			t1K: n('t1K'),
			t2K: n('t2K'),
			hours: n('hours'),
			note
		}),
		z.object({
			method: z.literal('gauge'),
			gauge1Pa: n('gauge1Pa'),
			gauge2Pa: n('gauge2Pa'),
			barometric1Pa: n('barometric1Pa'),
			barometric2Pa: n('barometric2Pa'),
			t1K: n('t1K'),
			t2K: n('t2K'),
			hours: n('hours'),
			note
		})
	],
	{ error: 'method must be "oxygen", "pressure" or "gauge".' }
);
