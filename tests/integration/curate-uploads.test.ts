/**
 * Uploads: the type comes from the bytes, size limits hold, photos lose their metadata and
 * get a thumbnail, and a refused upload leaves nothing behind (no S3 object, no file row).
 */
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as t from '../../src/lib/server/db/schema';
import { FieldError } from '../../src/lib/server/curate/common';
import { canReadFile, PHOTO_MAX_BYTES, sniffType, storePhoto } from '../../src/lib/server/curate/uploads';
import { curateWorld } from './helpers/curate-world';

let w: Awaited<ReturnType<typeof curateWorld>>;
beforeAll(async () => {
	w = await curateWorld('curate_uploads');
});
afterAll(async () => w?.close());

async function nothingStored() {
	expect(await w.db.select().from(t.files)).toHaveLength(0);
	expect(await w.storage.list()).toHaveLength(0);
}

async function photoWithGps() {
	return sharp({ create: { width: 64, height: 48, channels: 3, background: { r: 40, g: 90, b: 60 } } })
		.jpeg()
		.withExif({
			IFD0: { Make: 'Invented Camera', Model: 'Test 1' },
			IFD3: { GPSLatitudeRef: 'N', GPSLatitude: '51/1 30/1 0/1' }
		})
		.toBuffer();
}

describe('refused uploads store nothing', () => {
	it('a .png name with CSV bytes is refused as text', async () => {
		const csv = new TextEncoder().encode('Time (s),Red (V)\n0,0.1\n1,0.2\n');
		await expect(storePhoto(w.db, w.storage, w.member, { name: 'board.png', bytes: csv })).rejects.toThrow(
			/"board.png" is text \(CSV\), whatever its name says; upload a JPEG, PNG or WebP/
		);
		await nothingStored();
	});

	it('an oversized photo is refused with the limit in the message', async () => {
		const big = new Uint8Array(PHOTO_MAX_BYTES + 1);
		big.set([0xff, 0xd8, 0xff, 0xe0]);
		const err = await storePhoto(w.db, w.storage, w.member, { name: 'huge.jpg', bytes: big }).catch((e) => e);
		expect(err).toBeInstanceOf(FieldError);
		expect(err).toMatchObject({ status: 413, field: 'photo' });
		expect(err.message).toMatch(/photos can be at most 8\.0 MB/);
		await nothingStored();
	});

	it('a truncated image with a valid signature is refused as unreadable', async () => {
		const good = await photoWithGps();
		await expect(
			storePhoto(w.db, w.storage, w.member, { name: 'cut.jpg', bytes: new Uint8Array(good.subarray(0, 40)) })
		).rejects.toThrow(/could not be read as an image/);
		await nothingStored();
	});
});

describe('accepted photos', () => {
	it('are re-encoded without EXIF or GPS and get a thumbnail, both pending and owned', async () => {
		const input = await photoWithGps();
		expect((await sharp(input).metadata()).exif).toBeDefined();
		const stored = await storePhoto(w.db, w.storage, w.member, { name: 'board.jpg', bytes: new Uint8Array(input) });
		const rows = await w.db.select().from(t.files);
		expect(rows.map((r) => r.kind).sort()).toEqual(['photo', 'thumbnail']);
		const photo = rows.find((r) => r.id === stored.id)!;
		expect(photo).toMatchObject({
			status: 'pending',
			ownerId: w.member.id,
			contentType: 'image/jpeg',
			thumbnailId: stored.thumbnailId
		});
		const bytes = await w.storage.getBytes(photo.storageKey);
		const meta = await sharp(bytes!).metadata();
		expect(meta.exif).toBeUndefined();
		expect(meta.xmp).toBeUndefined();
		expect(sniffType(bytes!)).toBe('image/jpeg');
		expect(await w.storage.list('thumbnails/')).toHaveLength(1);
	});

	it('pending files are readable by their owner and curators only', () => {
		const file = { status: 'pending', ownerId: w.member.id };
		expect(canReadFile(file, w.member)).toBe(true);
		expect(canReadFile(file, w.curator)).toBe(true);
		expect(canReadFile(file, w.other)).toBe(false);
		expect(canReadFile(file, null)).toBe(false);
		expect(canReadFile({ status: 'public', ownerId: w.member.id }, null)).toBe(true);
		expect(canReadFile({ status: 'rejected', ownerId: w.member.id }, w.member)).toBe(false);
	});
});

describe('sniffing', () => {
	it('tells images and text apart by their bytes', async () => {
		const png = await sharp({ create: { width: 2, height: 2, channels: 3, background: '#000' } })
			.png()
			.toBuffer();
		const webp = await sharp({ create: { width: 2, height: 2, channels: 3, background: '#000' } })
			.webp()
			.toBuffer();
		expect(sniffType(new Uint8Array(png))).toBe('image/png');
		expect(sniffType(new Uint8Array(webp))).toBe('image/webp');
		expect(sniffType(new TextEncoder().encode('a,b\n1,2\n'))).toBe('text/csv');
		expect(sniffType(new Uint8Array([0x00, 0x01, 0x02]))).toBe('unknown');
	});
});
