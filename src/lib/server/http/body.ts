/**
 * Reading request bodies without ever turning a client's mistake into a 500: a wrong content
 * type, broken multipart or malformed JSON is a 400 with a plain message. Every
 * `request.formData()` and `request.json()` in routes goes through these.
 */
import { error } from '@sveltejs/kit';

const FORM_TYPES = ['application/x-www-form-urlencoded', 'multipart/form-data'];

export class BodyError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'BodyError';
	}
}

function mediaType(request: Request) {
	return (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
}

/** The posted form, or a BodyError. */
export async function readForm(request: Request): Promise<FormData> {
	if (!FORM_TYPES.includes(mediaType(request)))
		throw new BodyError('Send this as a form (application/x-www-form-urlencoded or multipart/form-data).');
	try {
		return await request.formData();
	} catch {
		throw new BodyError('The form data could not be read (broken or truncated multipart body).');
	}
}

/** The posted JSON value, or a BodyError. */
export async function readJson(request: Request): Promise<unknown> {
	const type = mediaType(request);
	if (type !== 'application/json' && !type.endsWith('+json'))
		throw new BodyError('Send a JSON body with Content-Type: application/json.');
	try {
		return await request.json();
	} catch {
		throw new BodyError('The body is not valid JSON.');
	}
}

/** For form actions and pages: the form, or a 400 error page. */
export async function formOr400(request: Request): Promise<FormData> {
	try {
		return await readForm(request);
	} catch (err) {
		if (err instanceof BodyError) error(400, err.message);
		throw err;
	}
}
