import { error, json } from '@sveltejs/kit';
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
	const data = await event.request.formData().catch(() => error(400, 'Send the photo as multipart form data.'));
	const file = await fileFrom(data, 'photo');
	if (!file) return json({ message: 'Choose a photo to upload.' }, { status: 400 });
	try {
		const stored = await storePhoto(db, appStorage(), user, file);
		return json(stored, { status: 201 });
	} catch (err) {
		if (err instanceof FieldError) return json({ message: err.message }, { status: err.status });
		throw err;
	}
};
