/**
 * Uploads: board photos (JPEG, PNG, WebP) and scope traces (CSV). The type comes from the
 * bytes, never from the file name or the browser's label. Photos are re-encoded (which
 * drops EXIF, GPS and every other metadata block) and get a thumbnail. Bytes go to object
 * storage through the storage module; a `file` row records them. If anything fails after
 * an object was written, the object is removed again, so a refused upload leaves nothing.
 */
import { createHash, randomUUID } from 'node:crypto';
import sharp, { type OutputInfo } from 'sharp';
import { and, eq, inArray, sql } from 'drizzle-orm';
import * as t from '../db/schema';
import type { Storage } from '../storage/index';
import { FieldError, type Actor, type Database, type DbOrTx } from './common';
import { hasRole } from '../../roles';

export const PHOTO_MAX_BYTES = 8 * 1024 * 1024;
export const TRACE_MAX_BYTES = 5 * 1024 * 1024;
/** Longest side of a stored photo; larger boards are scaled down (detail stays readable). */
const PHOTO_MAX_SIDE = 2400;
const THUMB_SIDE = 320;
/** Refuse decompression bombs: a small file that expands to a huge bitmap. */
const MAX_INPUT_PIXELS = 50_000_000;

export type SniffedType = 'image/jpeg' | 'image/png' | 'image/webp' | 'text/csv' | 'unknown';

/** What the bytes are, by their signature (and, for text, by being clean UTF-8). */
export function sniffType(bytes: Uint8Array): SniffedType {
	const b = bytes;
	if (b.length >= 3 && b[0] === 0xff && b[1] === 0xd8 && b[2] === 0xff) return 'image/jpeg';
	if (b.length >= 8 && [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a].every((x, i) => b[i] === x)) return 'image/png';
	if (
		b.length >= 12 &&
		String.fromCharCode(b[0], b[1], b[2], b[3]) === 'RIFF' &&
		String.fromCharCode(b[8], b[9], b[10], b[11]) === 'WEBP'
	)
		return 'image/webp';
	if (looksLikeText(b)) return 'text/csv';
	return 'unknown';
}

function looksLikeText(b: Uint8Array): boolean {
	if (b.length === 0) return false;
	const head = b.subarray(0, 64 * 1024);
	for (const x of head) {
		// NUL or other C0 controls (apart from tab, CR, LF) mean binary.
		if (x === 0 || (x < 0x20 && x !== 0x09 && x !== 0x0a && x !== 0x0d)) return false;
	}
	try {
		new TextDecoder('utf-8', { fatal: true }).decode(head.length < b.length ? trimPartialUtf8(head) : head);
		return true;
	} catch {
		return false;
	}
}

/** Drop a multi-byte character cut in half at the end of a slice. */
function trimPartialUtf8(b: Uint8Array) {
	const end = b.length;
	for (let i = 1; i <= 3 && end - i >= 0; i++) {
		const x = b[end - i];
		if ((x & 0xc0) === 0xc0) return b.subarray(0, end - i);
		if ((x & 0x80) === 0) break;
	}
	return b;
}

const PHOTO_TYPES = new Set<SniffedType>(['image/jpeg', 'image/png', 'image/webp']);
const kb = (n: number) => `${Math.round(n / 1024)} KB`;
const mb = (n: number) => `${(n / 1024 / 1024).toFixed(n >= 10 * 1024 * 1024 ? 0 : 1)} MB`;

function describe(type: SniffedType) {
	return type === 'text/csv'
		? 'text (CSV)'
		: type === 'unknown'
			? 'not a format we take'
			: type.replace('image/', '').toUpperCase() + ' image';
}

/** Refuse a photo that is too big or not really a JPEG, PNG or WebP. Returns the sniffed type. */
export function checkPhoto(name: string, bytes: Uint8Array): SniffedType {
	if (bytes.byteLength === 0) throw new FieldError('photo', `"${name}" is empty.`);
	if (bytes.byteLength > PHOTO_MAX_BYTES)
		throw new FieldError(
			'photo',
			`"${name}" is ${mb(bytes.byteLength)}; photos can be at most ${mb(PHOTO_MAX_BYTES)}.`,
			413
		);
	const type = sniffType(bytes);
	if (!PHOTO_TYPES.has(type))
		throw new FieldError(
			'photo',
			`"${name}" is ${describe(type)}, whatever its name says; upload a JPEG, PNG or WebP photo of the board.`,
			415
		);
	return type;
}

/** Refuse a trace that is too big or not plain text. Returns the decoded text. */
export function checkTrace(name: string, bytes: Uint8Array, field = 'trace'): string {
	if (bytes.byteLength === 0) throw new FieldError(field, `"${name}" is empty.`);
	if (bytes.byteLength > TRACE_MAX_BYTES)
		throw new FieldError(
			field,
			`"${name}" is ${mb(bytes.byteLength)}; traces can be at most ${mb(TRACE_MAX_BYTES)}.`,
			413
		);
	const type = sniffType(bytes);
	if (type !== 'text/csv')
		throw new FieldError(field, `"${name}" is ${describe(type)}, not a CSV text export from a scope.`, 415);
	return new TextDecoder('utf-8').decode(bytes);
}

const sha256 = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

async function putAll(storage: Storage, objects: Array<{ key: string; bytes: Uint8Array; type: string }>) {
	const written: string[] = [];
	try {
		for (const o of objects) {
			await storage.put(o.key, o.bytes, o.type);
			written.push(o.key);
		}
	} catch (err) {
		await Promise.allSettled(written.map((k) => storage.remove(k)));
		throw err;
	}
	return written;
}

export interface StoredPhoto {
	id: string;
	thumbnailId: string;
	width: number;
	height: number;
}

/**
 * Check, re-encode and store a board photo with its thumbnail. Metadata (EXIF, GPS, XMP)
 * is not carried over: sharp writes only pixels unless asked to keep metadata.
 */
export async function storePhoto(
	db: Database,
	storage: Storage,
	owner: Actor,
	file: { name: string; bytes: Uint8Array }
): Promise<StoredPhoto> {
	const type = checkPhoto(file.name, file.bytes);
	await assertUploadQuota(db, owner, file.bytes.byteLength);
	let main: { data: Buffer; info: OutputInfo };
	let thumb: { data: Buffer; info: OutputInfo };
	try {
		const base = () =>
			sharp(file.bytes, { limitInputPixels: MAX_INPUT_PIXELS, failOn: 'error' })
				// Apply the camera's orientation tag before it is dropped with the rest of the metadata.
				.rotate();
		const encoded = base().resize({
			width: PHOTO_MAX_SIDE,
			height: PHOTO_MAX_SIDE,
			fit: 'inside',
			withoutEnlargement: true
		});
		main = await (
			type === 'image/png'
				? encoded.png({ compressionLevel: 9 })
				: type === 'image/webp'
					? encoded.webp({ quality: 85 })
					: encoded.jpeg({ quality: 85, mozjpeg: true })
		).toBuffer({ resolveWithObject: true });
		thumb = await base()
			.resize({ width: THUMB_SIDE, height: THUMB_SIDE, fit: 'inside', withoutEnlargement: true })
			.webp({ quality: 75 })
			.toBuffer({ resolveWithObject: true });
	} catch (err) {
		throw new FieldError('photo', `"${file.name}" could not be read as an image (${(err as Error).message}).`, 415);
	}
	const ext = type === 'image/png' ? 'png' : type === 'image/webp' ? 'webp' : 'jpg';
	const photoId = randomUUID();
	const thumbId = randomUUID();
	const photoKey = `photos/${photoId}.${ext}`;
	const thumbKey = `thumbnails/${thumbId}.webp`;
	const mainBytes = new Uint8Array(main.data);
	const thumbBytes = new Uint8Array(thumb.data);
	const written = await putAll(storage, [
		{ key: photoKey, bytes: mainBytes, type },
		{ key: thumbKey, bytes: thumbBytes, type: 'image/webp' }
	]);
	try {
		await db.transaction(async (tx) => {
			await tx.insert(t.files).values({
				id: thumbId,
				ownerId: owner.id,
				kind: 'thumbnail',
				contentType: 'image/webp',
				byteSize: thumbBytes.byteLength,
				sha256: sha256(thumbBytes),
				storageKey: thumbKey,
				originalName: file.name.slice(0, 200),
				width: thumb.info.width,
				height: thumb.info.height
			});
			await tx.insert(t.files).values({
				id: photoId,
				ownerId: owner.id,
				kind: 'photo',
				contentType: type,
				byteSize: mainBytes.byteLength,
				sha256: sha256(mainBytes),
				storageKey: photoKey,
				originalName: file.name.slice(0, 200),
				width: main.info.width,
				height: main.info.height,
				thumbnailId: thumbId
			});
		});
	} catch (err) {
		await Promise.allSettled(written.map((k) => storage.remove(k)));
		throw err;
	}
	return { id: photoId, thumbnailId: thumbId, width: main.info.width, height: main.info.height };
}

/** Store an already-checked trace (CSV text). Returns the file id. */
export async function storeTrace(
	db: Database,
	storage: Storage,
	owner: Actor,
	name: string,
	csv: string
): Promise<string> {
	const bytes = new TextEncoder().encode(csv);
	if (bytes.byteLength > TRACE_MAX_BYTES)
		throw new FieldError('trace', `The trace is larger than ${kb(TRACE_MAX_BYTES)}.`, 413);
	try {
		await assertUploadQuota(db, owner, bytes.byteLength);
	} catch (err) {
		if (err instanceof FieldError) throw new FieldError('trace', err.message, err.status);
		throw err;
	}
	const id = randomUUID();
	const key = `traces/${id}.csv`;
	await putAll(storage, [{ key, bytes, type: 'text/csv; charset=utf-8' }]);
	try {
		await db.insert(t.files).values({
			id,
			ownerId: owner.id,
			kind: 'trace',
			contentType: 'text/csv',
			byteSize: bytes.byteLength,
			sha256: sha256(bytes),
			storageKey: key,
			originalName: name.slice(0, 200)
		});
	} catch (err) {
		await storage.remove(key).catch(() => {});
		throw err;
	}
	return id;
}

/**
 * A file someone may attach to their own submission: it must exist, be of the right kind,
 * and be theirs (curators may attach anyone's).
 */
export async function ownFile(db: DbOrTx, actor: Actor, id: string, kind: 'photo' | 'trace') {
	const [row] = await db.select().from(t.files).where(eq(t.files.id, id));
	if (!row || row.kind !== kind)
		throw new FieldError(
			kind === 'photo' ? 'photoFileId' : 'traceFileId',
			`That ${kind} upload was not found; upload it again.`
		);
	if (row.ownerId !== actor.id && !hasRole(actor.role, 'curator'))
		throw new FieldError(
			kind === 'photo' ? 'photoFileId' : 'traceFileId',
			`That ${kind} belongs to someone else.`,
			403
		);
	return row;
}

/** Make files (and their thumbnails) public or rejected when their submission is reviewed. */
export async function setFilesStatus(
	db: DbOrTx,
	ids: Array<string | null | undefined>,
	status: 'public' | 'rejected' | 'pending'
) {
	const list = ids.filter((x): x is string => !!x);
	if (!list.length) return;
	const rows = await db
		.select({ id: t.files.id, thumb: t.files.thumbnailId })
		.from(t.files)
		.where(inArray(t.files.id, list));
	const all = [...new Set([...rows.map((r) => r.id), ...rows.map((r) => r.thumb).filter((x): x is string => !!x)])];
	if (all.length) await db.update(t.files).set({ status }).where(inArray(t.files.id, all));
}

/** Who may read a stored file: public ones anyone; pending ones their owner and curators; rejected ones curators. */
export function canReadFile(file: { status: string; ownerId: string | null }, user: Actor | null): boolean {
	if (file.status === 'public') return true;
	if (!user) return false;
	if (hasRole(user.role, 'curator')) return true;
	return file.status === 'pending' && file.ownerId === user.id;
}

/** The file row and, for thumbnails, the parent photo's status governs access. */
export async function fileForReading(db: Database, id: string) {
	const [row] = await db.select().from(t.files).where(eq(t.files.id, id));
	if (!row) return null;
	if (row.kind === 'thumbnail') {
		const [parent] = await db
			.select({ status: t.files.status, ownerId: t.files.ownerId })
			.from(t.files)
			.where(and(eq(t.files.thumbnailId, row.id), eq(t.files.kind, 'photo')));
		if (parent) return { ...row, status: parent.status, ownerId: parent.ownerId };
	}
	return row;
}

// ------------------------------------------------------------------ quota and clean-up

/** Per member: at most this many bytes and files waiting unattached (pending) at once. */
export const UPLOAD_QUOTA_BYTES = 60 * 1024 * 1024;
export const UPLOAD_QUOTA_FILES = 30;
/** A pending upload not attached to a submission within this long is removed by housekeeping. */
export const PENDING_UPLOAD_TTL_MS = 24 * 3600_000;

/**
 * Refuse an upload that would take a member past their quota of pending files (curators and
 * admins are trusted with bulk trace imports). Thumbnails count with their photo's bytes.
 */
export async function assertUploadQuota(db: Database, owner: Actor, incomingBytes: number) {
	if (hasRole(owner.role, 'curator')) return;
	const [row] = await db
		.select({
			bytes: sql<number>`coalesce(sum(${t.files.byteSize}), 0)::bigint`,
			count: sql<number>`count(*) filter (where ${t.files.kind} <> 'thumbnail')::int`
		})
		.from(t.files)
		.where(and(eq(t.files.ownerId, owner.id), eq(t.files.status, 'pending')));
	const bytes = Number(row?.bytes ?? 0);
	const count = Number(row?.count ?? 0);
	if (count >= UPLOAD_QUOTA_FILES || bytes + incomingBytes > UPLOAD_QUOTA_BYTES)
		throw new FieldError(
			'photo',
			`You have ${count} uploads (${kb(bytes)}) waiting to be attached; the limit is ${UPLOAD_QUOTA_FILES} files or ${kb(UPLOAD_QUOTA_BYTES)}. Submit or wait a day for unused ones to be removed.`,
			413
		);
}

/**
 * Housekeeping: pending files older than a day that no bench run or teardown report points at
 * (nor a photo that is attached, for thumbnails) lose their stored object and their row.
 */
export async function removeUnattachedUploads(db: Database, storage: Storage, now = new Date()) {
	const cutoff = new Date(now.getTime() - PENDING_UPLOAD_TTL_MS);
	const stale = await db.execute<{ id: string; storage_key: string }>(sql`
		select f.id, f.storage_key from ${t.files} f
		where f.status = 'pending' and f.created_at < ${cutoff.toISOString()}::timestamptz
			and not exists (select 1 from ${t.benchRuns} r where r.trace_file_id = f.id)
			and not exists (select 1 from ${t.teardownReports} d where d.photo_file_id = f.id)
			and not exists (
				select 1 from ${t.files} p where p.thumbnail_id = f.id and (p.status <> 'pending' or p.created_at >= ${cutoff.toISOString()}::timestamptz
					or exists (select 1 from ${t.teardownReports} d2 where d2.photo_file_id = p.id))
			)`);
	let removed = 0;
	for (const row of stale) {
		await storage.remove(row.storage_key).catch(() => {});
		const gone = await db
			.delete(t.files)
			.where(and(eq(t.files.id, row.id), eq(t.files.status, 'pending')))
			.returning({ id: t.files.id });
		removed += gone.length;
	}
	return removed;
}
