// The calendar's calls to the JSON API, each answered as a value: the body, or the refusal
// with its message, reasons (rule refusals) and field messages.
import type { ApiBooking, Reason, SeriesRefusal } from './types';

export type Refusal = {
	ok: false;
	status: number;
	message: string;
	reasons: Reason[];
	fields: Record<string, string>;
	refused: SeriesRefusal[];
};
export type Answer<T> = ({ ok: true; status: number } & T) | Refusal;

async function call<T>(method: string, url: string, body?: unknown): Promise<Answer<T>> {
	try {
		const response = await fetch(url, {
			method,
			headers: body === undefined ? {} : { 'content-type': 'application/json' },
			body: body === undefined ? undefined : JSON.stringify(body)
		});
		const json = await response.json().catch(() => ({}));
		if (response.ok) return { ok: true, status: response.status, ...(json as T) };
		const details = json.error?.details ?? {};
		return {
			ok: false,
			status: response.status,
			message: json.error?.message ?? 'That did not work; try again.',
			reasons: details.reasons ?? [],
			fields: details.fields ?? {},
			refused: details.refused ?? []
		};
	} catch {
		return {
			ok: false,
			status: 0,
			message: 'Boxwright could not be reached; nothing was changed. Try again.',
			reasons: [],
			fields: {},
			refused: []
		};
	}
}

export type NewBooking = {
	boxId: number;
	start: string;
	end: string;
	purpose: string;
	chemicalClasses: string[];
	volatileSolvents: boolean;
	groupId?: number;
	repeatWeeks?: number;
};

export const book = (body: NewBooking) =>
	call<{ booking?: ApiBooking; created?: ApiBooking[]; refused?: SeriesRefusal[] }>(
		'POST',
		'/api/bookings',
		body
	);

export const changeBooking = (
	id: number,
	change: { start?: string; end?: string; purpose?: string }
) => call<{ booking: ApiBooking }>('PATCH', `/api/bookings/${id}`, change);

export const cancelBooking = (id: number, reason?: string) =>
	call<{ booking: ApiBooking }>(
		'DELETE',
		`/api/bookings/${id}${reason ? `?reason=${encodeURIComponent(reason)}` : ''}`
	);

export const watchTime = (boxId: number, start: string, end: string) =>
	call<{ watch: { id: number; notifiedAt: string | null } }>(
		'POST',
		`/api/boxes/${boxId}/watches`,
		{ start, end }
	);
