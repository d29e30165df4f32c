// Uploaded files. Local disk under BOXWRIGHT_DATA_DIR/uploads by default; the same calls
// are meant to front an S3-compatible store when one is configured (upkeep issue).
import { mkdir, readFile, writeFile } from 'node:fs/promises';
import { randomBytes } from 'node:crypto';
import { dirname, join, resolve } from 'node:path';

const root = () => resolve(process.env.BOXWRIGHT_DATA_DIR ?? '.data', 'uploads');

export const MAX_PHOTO_BYTES = 5 * 1024 * 1024;

/** The image type from the file's first bytes, whatever its name says; null if not an image. */
export function sniffImage(bytes: Uint8Array): { ext: string; type: string } | null {
	const starts = (...sig: number[]) => sig.every((b, i) => bytes[i] === b);
	if (starts(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a))
		return { ext: 'png', type: 'image/png' };
	if (starts(0xff, 0xd8, 0xff)) return { ext: 'jpg', type: 'image/jpeg' };
	if (starts(0x52, 0x49, 0x46, 0x46) && String.fromCharCode(...bytes.slice(8, 12)) === 'WEBP') {
		return { ext: 'webp', type: 'image/webp' };
	}
	return null;
}

export type PhotoCheck =
	{ ok: true; bytes: Uint8Array; ext: string } | { ok: false; message: string };

export async function checkPhoto(file: File): Promise<PhotoCheck> {
	if (file.size > MAX_PHOTO_BYTES) return { ok: false, message: 'The photo is larger than 5 MB.' };
	const bytes = new Uint8Array(await file.arrayBuffer());
	const image = sniffImage(bytes);
	if (!image) return { ok: false, message: 'That file is not a PNG, JPEG or WebP image.' };
	return { ok: true, bytes, ext: image.ext };
}

/** Stores bytes under a fresh random key in `folder`; returns the key. */
export async function put(folder: string, bytes: Uint8Array, ext: string): Promise<string> {
	const key = `${folder}/${randomBytes(16).toString('hex')}.${ext}`;
	const path = join(root(), key);
	await mkdir(dirname(path), { recursive: true });
	await writeFile(path, bytes);
	return key;
}

/** Reads a stored file; keys are only ever ones `put` made (checked by shape). */
export async function get(key: string): Promise<{ bytes: Uint8Array; type: string } | null> {
	if (!/^[a-z-]+\/[0-9a-f]{32}\.(png|jpg|webp)$/.test(key)) return null;
	const bytes = await readFile(join(root(), key)).catch(() => null);
	if (!bytes) return null;
	return { bytes, type: sniffImage(bytes)?.type ?? 'application/octet-stream' };
}
