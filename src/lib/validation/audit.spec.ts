import { describe, expect, it } from 'vitest';
import { auditFilterSchema } from './audit';
import { fieldErrors } from './fields';

describe('auditFilterSchema', () => {
	it('reads the query string: numbers coerced, page 1 by default', () => {
		expect(auditFilterSchema.parse({ actorId: '7', from: '2026-03-01', to: '2026-03-31' })).toEqual(
			{ actorId: 7, from: '2026-03-01', to: '2026-03-31', page: 1 }
		);
	});

	it('refuses a date that does not exist and a range that ends before it starts', () => {
		expect(fieldErrors(auditFilterSchema.safeParse({ from: '2026-02-30' }).error!)).toEqual({
			from: 'There is no such date.'
		});
		expect(
			fieldErrors(auditFilterSchema.safeParse({ from: '2026-03-02', to: '2026-03-01' }).error!)
		).toEqual({ to: 'The last day comes before the first.' });
	});

	it('needs the kind of record when an id is given', () => {
		expect(fieldErrors(auditFilterSchema.safeParse({ entityId: '12' }).error!)).toEqual({
			entity: 'Choose the kind of record the id belongs to.'
		});
	});
});
