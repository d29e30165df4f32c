// Reads the .eml files the local sink writes, for tests.
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

/** Decodes RFC 2047 encoded words (=?UTF-8?Q?…?= and =?UTF-8?B?…?=) in a header value. */
export function decodeHeader(value: string): string {
	return value
		.replace(/\?=\s+=\?/g, '?==?')
		.replace(/=\?utf-8\?([QB])\?([^?]*)\?=/gi, (_, enc: string, text: string) => {
			if (enc.toUpperCase() === 'B') return Buffer.from(text, 'base64').toString('utf8');
			const bytes = text
				.replace(/_/g, ' ')
				.replace(/=([0-9A-F]{2})/gi, (_m, h: string) => String.fromCharCode(parseInt(h, 16)));
			return Buffer.from(bytes, 'latin1').toString('utf8');
		});
}

export type SunkMail = {
	file: string;
	raw: string;
	to: string;
	subject: string;
	messageId: string;
};

function header(raw: string, name: string): string {
	const head = raw.split(/\r?\n\r?\n/)[0].replace(/\r?\n[ \t]+/g, ' ');
	const match = new RegExp(`^${name}: (.*)$`, 'im').exec(head);
	return match ? decodeHeader(match[1].trim()) : '';
}

export function sunkMail(dir = process.env.MAIL_SINK_DIR): SunkMail[] {
	if (!dir || !existsSync(dir)) return [];
	return readdirSync(dir)
		.filter((f) => f.endsWith('.eml'))
		.map((file) => {
			const raw = readFileSync(join(dir, file), 'utf8');
			return {
				file,
				raw,
				to: header(raw, 'To'),
				subject: header(raw, 'Subject'),
				messageId: header(raw, 'Message-ID')
			};
		});
}
