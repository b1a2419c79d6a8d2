import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { canReadFile, fileForReading } from '$lib/server/curate/uploads';
import { appStorage } from '$lib/server/storage/app';
import type { RequestHandler } from './$types';

const UUID_RE = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;

/**
 * Stream a stored file from object storage after the role check. Pending uploads reach
 * only their owner and curators; the bucket itself is never exposed.
 */
export const GET: RequestHandler = async ({ params, locals }) => {
	// Public files need no sign-in, so the check is per file rather than requireRole.
	if (!UUID_RE.test(params.id)) error(404, 'No such file.');
	const file = await fileForReading(db, params.id);
	// Same answer for "missing" and "not yours": do not reveal that a pending file exists.
	if (!file || !canReadFile(file, locals.user)) error(404, 'No such file.');
	const obj = await appStorage().get(file.storageKey);
	if (!obj) error(410, 'The file is no longer stored.');
	const isImage = file.contentType.startsWith('image/');
	const name = (file.originalName || `${file.kind}-${file.id}`).replace(/[^\w.-]+/g, '_');
	return new Response(obj.body, {
		headers: {
			'content-type': isImage ? file.contentType : 'text/csv; charset=utf-8',
			'content-length': String(obj.length ?? file.byteSize),
			'cache-control': file.status === 'public' ? 'public, max-age=3600' : 'private, no-store',
			'content-disposition': `${isImage ? 'inline' : 'attachment'}; filename="${name}"`,
			'content-security-policy': "default-src 'none'; sandbox"
		}
	});
};
