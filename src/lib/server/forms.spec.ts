import { describe, expect, it, vi } from 'vitest';
import { z } from 'zod';

vi.mock('./config', () => ({ config: { facilityTz: 'Europe/Berlin' } }));
const { runConfirmedForm, runForm } = await import('./forms');
const { ServiceError } = await import('./errors');

const schema = z.strictObject({ bookingId: z.coerce.number().int().positive() });

function post(action: string, fields: [string, string][]) {
	return new Request(`http://localhost/bookings${action}`, {
		method: 'POST',
		body: new URLSearchParams(fields)
	});
}

const ask = { title: 'Cancel it?', message: 'It will be billed.', yes: 'Yes, cancel it' };

describe('runConfirmedForm', () => {
	it('answers the consequence and the fields to post again, without calling the service', async () => {
		const call = vi.fn(async () => ({ cancelled: 1 }));
		const answer = await runConfirmedForm(
			post('?/cancel', [['bookingId', '7']]),
			schema,
			() => ask,
			call
		);
		expect(call).not.toHaveBeenCalled();
		expect(answer).toEqual({
			values: { bookingId: '7' },
			confirm: { ...ask, details: [], action: '?/cancel', fields: [['bookingId', '7']] }
		});
	});

	it('calls the service once confirmed=yes comes back, which a strict schema does not see', async () => {
		const call = vi.fn(async ({ bookingId }: { bookingId: number }) => ({ cancelled: bookingId }));
		const answer = await runConfirmedForm(
			post('?/cancel', [
				['bookingId', '7'],
				['confirmed', 'yes']
			]),
			schema,
			() => ask,
			call,
			{ form: 'cancel' }
		);
		expect(answer).toEqual({ form: 'cancel', cancelled: 7 });
	});

	it('goes straight on when there is nothing to confirm', async () => {
		const answer = await runConfirmedForm(
			post('?/outage', [['bookingId', '7']]),
			schema,
			() => null,
			async () => ({ made: true })
		);
		expect(answer).toEqual({ made: true });
	});

	it('answers a refusal from the question as the service would, and field errors first', async () => {
		const call = vi.fn(async () => ({}));
		const refused = await runConfirmedForm(
			post('?/endOutage', [['bookingId', '7']]),
			schema,
			() => {
				throw new ServiceError(409, 'A glove change on this outage is still open.');
			},
			call
		);
		expect(refused).toMatchObject({
			status: 409,
			data: { message: 'A glove change on this outage is still open.' }
		});
		const invalid = await runConfirmedForm(
			post('?/cancel', [['bookingId', 'x']]),
			schema,
			() => ask,
			call
		);
		expect(invalid).toMatchObject({
			status: 400,
			data: { errors: { bookingId: expect.any(String) } }
		});
		expect(call).not.toHaveBeenCalled();
	});

	it('keeps repeated fields in order, never a password, and posts a default action to the page', async () => {
		const answer = await runConfirmedForm(
			post('', [
				['portId', '1'],
				['portId', ''],
				['password', 'secret'],
				['bookingId', '7']
			]),
			z.object({ bookingId: z.coerce.number() }),
			() => ask,
			async () => ({})
		);
		expect(answer).toMatchObject({
			confirm: {
				action: '',
				fields: [
					['portId', '1'],
					['portId', ''],
					['bookingId', '7']
				]
			}
		});
	});
});

describe('runForm', () => {
	it('still refuses confirmed as an unknown field of a strict schema: it has no step', async () => {
		const answer = await runForm(
			post('?/cancel', [
				['bookingId', '7'],
				['confirmed', 'yes']
			]),
			schema,
			async () => ({ done: true })
		);
		expect(answer).toMatchObject({ status: 400 });
	});
});
