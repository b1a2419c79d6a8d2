import { db } from '$lib/server/db';
import { exportCatalogue, exportReadings } from '$lib/server/queries/public';
import { cachedResponse, DATA_LICENCE, notFound, toCsv } from '$lib/server/queries/public-http';
import type { RequestHandler } from './$types';

const EXPORTS = {
	catalogue: exportCatalogue,
	readings: exportReadings
} as const;

/** /api/v1/export/{catalogue|readings}.{csv|json}: open data under CC BY 4.0. */
export const GET: RequestHandler = async ({ params, request }) => {
	const m = /^(catalogue|readings)\.(csv|json)$/.exec(params.file);
	if (!m) return notFound('export');
	const [, what, format] = m as unknown as [string, keyof typeof EXPORTS, 'csv' | 'json'];
	const rows: object[] = await EXPORTS[what](db);
	const headers = {
		Link: `<${DATA_LICENCE.url}>; rel="license"`,
		'X-Data-License': DATA_LICENCE.name,
		'Content-Disposition': `inline; filename="scopegrade-${what}.${format}"`
	};
	if (format === 'json') {
		const body = JSON.stringify({
			licence: { name: DATA_LICENCE.name, url: DATA_LICENCE.url, notice: DATA_LICENCE.notice },
			count: rows.length,
			rows
		});
		return cachedResponse(request, body, 'application/json; charset=utf-8', headers);
	}
	// The licence travels inside the file too, as a last column, so a copy never loses it.
	const withLicence = rows.map((r) => ({ ...r, licence: DATA_LICENCE.name }));
	const columns = withLicence.length ? (Object.keys(withLicence[0]) as never[]) : [];
	return cachedResponse(request, toCsv(withLicence, columns), 'text/csv; charset=utf-8; header=present', headers);
};
