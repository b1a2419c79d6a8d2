import { json } from '@sveltejs/kit';
import { readForm } from '$lib/server/http/body';
import { problem } from '$lib/server/http/problem';
import { requireApiRole } from '$lib/server/auth/guard';
import { db } from '$lib/server/db';
import { FieldError } from '$lib/server/curate/common';
import { fileFrom } from '$lib/server/curate/forms';
import { storePhoto } from '$lib/server/curate/uploads';
import { appStorage } from '$lib/server/storage/app';
import type { RequestHandler } from './$types';

/**
 * Upload a board photo (multipart field "photo") for a submission, with progress shown by
 * the page through XMLHttpRequest. Answers { id, thumbnailId } or { message } with 4xx.
 */
export const POST: RequestHandler = async (event) => {
	const user = requireApiRole(event, 'member');
	const data = await readForm(event.request).catch(() => null);
	if (!data) return problem(400, 'Send the photo as multipart form data.');
	const file = await fileFrom(data, 'photo');
	if (!file) return problem(400, 'Choose a photo to upload.', { errors: { photo: 'Choose a photo to upload.' } });
	try {
		const stored = await storePhoto(db, appStorage(), user, file);
		return json(stored, { status: 201 });
	} catch (err) {
		if (err instanceof FieldError) return problem(err.status, err.message, { errors: { photo: err.message } });
		throw err;
	}
};
