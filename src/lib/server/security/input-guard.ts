/**
 * Input no route should ever see, refused once for every route before it runs:
 * - a NUL character in the path, a query parameter or any text field of a form or JSON body
 *   (PostgreSQL text cannot hold it, so it would fail deep inside a query as a 500);
 * - a form body that cannot be parsed (broken multipart, wrong boundary).
 * Files in multipart bodies are binary and may contain NUL bytes; only text fields are checked.
 */
import type { Handle } from '@sveltejs/kit';
import { problem } from '$lib/server/http/problem';

const UNSAFE_METHODS = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);
const NUL_MESSAGE = 'Text may not contain NUL characters.';
const FORM_TYPES = new Set(['application/x-www-form-urlencoded', 'multipart/form-data']);
/** Endpoints (+server.ts) that take their own body types; everything else that takes a POST is a page action. */
const NON_PAGE_PREFIXES = ['/api/', '/auth/', '/files', '/unsubscribe/'];

export type InputRefusal = { status: 400 | 415; detail: string; field?: string };

export async function inputRefusal(request: Request, url: URL): Promise<InputRefusal | null> {
	try {
		if (decodeURIComponent(url.pathname).includes('\0'))
			return { status: 400, detail: `The address contains a NUL character.` };
	} catch {
		return { status: 400, detail: 'The address is not valid percent-encoding.' };
	}
	for (const [key, value] of url.searchParams) {
		if (key.includes('\0') || value.includes('\0'))
			return {
				status: 400,
				detail: `${NUL_MESSAGE} (query parameter "${key.replace(/\0/g, '')}")`,
				field: key.replace(/\0/g, '')
			};
	}
	if (!UNSAFE_METHODS.has(request.method) || !request.body) return null;
	const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
	// Pages take only form posts (their actions); a JSON or text body there is a client mistake.
	if (request.method === 'POST' && !FORM_TYPES.has(type) && !NON_PAGE_PREFIXES.some((p) => url.pathname.startsWith(p)))
		return {
			status: 415,
			detail: `Forms here take form data (application/x-www-form-urlencoded or multipart/form-data), not ${type || 'an untyped body'}.`
		};
	if (type === 'application/x-www-form-urlencoded' || type === 'multipart/form-data') {
		let form: FormData;
		try {
			form = await request.clone().formData();
		} catch {
			return { status: 400, detail: 'The form data could not be read (broken or truncated body).' };
		}
		for (const [key, value] of form) {
			if (key.includes('\0') || (typeof value === 'string' && value.includes('\0'))) {
				const field = key.replace(/\0/g, '');
				return { status: 400, detail: `${NUL_MESSAGE} (field "${field}")`, field };
			}
		}
	} else if (type === 'application/json' || type.endsWith('+json')) {
		const text = await request.clone().text();
		if (text.includes('\0') || /\\u0000/i.test(text)) return { status: 400, detail: `${NUL_MESSAGE} (JSON body)` };
	}
	return null;
}

export const inputGuard: Handle = async ({ event, resolve }) => {
	const refusal = await inputRefusal(event.request, event.url);
	if (!refusal) return resolve(event);
	const errors = refusal.field ? { [refusal.field]: NUL_MESSAGE } : undefined;
	return problem(refusal.status, refusal.detail, errors ? { errors } : {});
};
