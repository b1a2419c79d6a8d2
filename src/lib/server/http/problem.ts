/**
 * The one builder of JSON API error answers: RFC 9457 problem details
 * (`application/problem+json`), with field messages in the `errors` extension member
 * (`{ field: message }`). Every `/api` route answers its errors through `problem()`, and the
 * hooks turn SvelteKit's own `error()` answers under /api (guards, unknown routes) into the
 * same shape through `asProblem()`.
 */
import { z } from 'zod';

export const PROBLEM_TYPE = 'application/problem+json';

const TITLES: Record<number, string> = {
	400: 'Bad request',
	401: 'Sign-in required',
	403: 'Forbidden',
	404: 'Not found',
	405: 'Method not allowed',
	409: 'Conflict',
	413: 'Content too large',
	415: 'Unsupported media type',
	422: 'Unprocessable content',
	429: 'Too many requests',
	500: 'Internal server error'
};

export interface ProblemExtras {
	/** Field messages, keyed by the field's path (`minBand`, `items.0.price`). */
	errors?: Record<string, string>;
	headers?: Record<string, string>;
	/** Further extension members. */
	[member: string]: unknown;
}

export interface ProblemBody {
	type: string;
	title: string;
	status: number;
	detail: string;
	errors?: Record<string, string>;
	[member: string]: unknown;
}

export function problemBody(status: number, detail: string, extras: Omit<ProblemExtras, 'headers'> = {}): ProblemBody {
	return { type: 'about:blank', title: TITLES[status] ?? `HTTP ${status}`, status, detail, ...extras };
}

/** A problem-details Response. */
export function problem(status: number, detail: string, extras: ProblemExtras = {}): Response {
	const { headers, ...members } = extras;
	return new Response(JSON.stringify(problemBody(status, detail, members)), {
		status,
		headers: { 'content-type': PROBLEM_TYPE, 'cache-control': 'no-store', ...headers }
	});
}

/** zod issues as `{ path: message }` (first message per path). */
export function zodFieldErrors(err: z.ZodError): Record<string, string> {
	const out: Record<string, string> = {};
	for (const issue of err.issues) {
		const key = issue.path.map(String).join('.') || '_';
		out[key] ??= issue.message;
	}
	return out;
}

/** 400 for a failed zod parse of API input. */
export function invalidInput(err: z.ZodError, detail = 'Some fields are not valid; see errors.'): Response {
	return problem(400, detail, { errors: zodFieldErrors(err) });
}

/**
 * A JSON error answer SvelteKit built from `error(status, message)` (`{ "message": ... }`),
 * re-sent as problem details. Anything else comes back unchanged.
 */
export async function asProblem(response: Response): Promise<Response> {
	if (response.status < 400) return response;
	const type = response.headers.get('content-type') ?? '';
	if (type.startsWith(PROBLEM_TYPE)) return response;
	let detail = response.statusText || TITLES[response.status] || 'Request failed';
	if (type.startsWith('application/json')) {
		const body = (await response
			.clone()
			.json()
			.catch(() => null)) as { message?: unknown } | null;
		if (body && typeof body.message === 'string') detail = body.message;
		else return response;
	} else if (type.startsWith('text/plain')) {
		detail = (await response.clone().text()).slice(0, 500) || detail;
	} else if (!type.startsWith('text/html')) return response;
	// (An HTML error page under /api is SvelteKit's answer for a path no route matches.)
	const headers: Record<string, string> = {};
	for (const name of ['retry-after', 'allow', 'www-authenticate']) {
		const v = response.headers.get(name);
		if (v) headers[name] = v;
	}
	return problem(response.status, detail, { headers });
}
