import { describe, expect, it } from 'vitest';
import { fieldErrors } from './fields';
import { markReadSchema } from './notifications';
import { grantSchema, moduleSchema, trainingRequestSchema } from './training';

const refused = (result: { success: boolean; error?: Parameters<typeof fieldErrors>[0] }) =>
	result.success ? {} : fieldErrors(result.error!);

describe('training and notice bodies', () => {
	it('an unknown field is refused under its own name', () => {
		expect(
			Object.keys(refused(trainingRequestSchema.safeParse({ moduleId: 3, urgent: true })))
		).toEqual(['urgent']);
		expect(Object.keys(refused(markReadSchema.safeParse({ ids: [1], all: true })))).toEqual([
			'all'
		]);
		expect(
			Object.keys(refused(grantSchema.safeParse({ userId: 1, moduleId: 2, grantedBy: 9 })))
		).toEqual(['grantedBy']);
	});
	it('a certification needs no date; an expiry needs an offset', () => {
		expect(grantSchema.parse({ userId: 1, moduleId: 2 })).toEqual({ userId: 1, moduleId: 2 });
		expect(
			grantSchema.parse({ userId: 1, moduleId: 2, expiresAt: '2027-01-31T00:00:00+01:00' })
				.expiresAt
		).toEqual(new Date('2027-01-30T23:00:00Z'));
		expect(
			Object.keys(
				refused(grantSchema.safeParse({ userId: 1, moduleId: 2, expiresAt: '2027-01-31' }))
			)
		).toEqual(['expiresAt']);
	});
	it('form text is read as the API reads numbers', () => {
		expect(trainingRequestSchema.parse({ moduleId: '4', note: '  Tuesdays ' })).toEqual({
			moduleId: 4,
			note: 'Tuesdays'
		});
		expect(
			moduleSchema.parse({ name: 'Antechamber', validityMonths: '24', trainerIds: ['7'] })
		).toMatchObject({ validityMonths: 24, trainerIds: [7], prerequisiteIds: [], description: '' });
	});
	it('marking read needs at least one id', () => {
		expect(Object.keys(refused(markReadSchema.safeParse({ ids: [] })))).toEqual(['ids']);
		expect(Object.keys(refused(markReadSchema.safeParse({})))).toEqual(['ids']);
	});
});
