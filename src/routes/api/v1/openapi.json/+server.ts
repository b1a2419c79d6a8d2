import { openApiDocument } from '$lib/server/api/openapi';
import { cachedJson } from '$lib/server/queries/public-http';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = ({ request, url }) => cachedJson(request, openApiDocument(url.origin));
