import { describe, expect, it } from 'vitest';
import { damageReportSchema, portDamageSchema } from './gloves';

describe('damage report schema', () => {
	it('reads a hole size typed with a decimal comma', () => {
		const parsed = damageReportSchema.parse({
			location: 'fingertip',
			hand: 'left',
			holeSizeMm: '2,5'
		});
		expect(parsed.holeSizeMm).toBe(2.5);
	});

	it('asks for the port when none was tapped, and refuses unknown fields by name', () => {
		const missing = portDamageSchema.safeParse({
			location: 'cuff',
			hand: 'right',
			holeSizeMm: '1'
		});
		expect(missing.error?.issues.map((i) => [i.path.join('.'), i.message])).toEqual([
			['portId', 'Tap the port whose glove is damaged.']
		]);
		const extra = portDamageSchema.safeParse({
			portId: '3',
			location: 'cuff',
			hand: 'right',
			holeSizeMm: '1',
			gloveId: '9'
		});
		expect(extra.success).toBe(false);
	});
});
