import { env } from '$env/dynamic/private';
import { openApiDocument } from '$lib/server/api/openapi';
import { cachedResponse, JSON_TYPE } from '$lib/server/queries/public-http';
import { configuredOrigin } from '$lib/server/security/public-origin';
import type { RequestHandler } from './$types';

/**
 * The same for every request, so built once: its server URL comes from the configured origin,
 * never from the request's Host header.
 */
let document: string | null = null;

export const GET: RequestHandler = ({ request }) => {
	document ??= JSON.stringify(openApiDocument(configuredOrigin(env)?.origin ?? null));
	return cachedResponse(request, document, JSON_TYPE);
};
