import type { ParamMatcher } from '@sveltejs/kit';

/** A converter or guide slug: lowercase words joined by single hyphens (as the schema checks). */
export const match: ParamMatcher = (param) => param.length <= 120 && /^[a-z0-9]+(-[a-z0-9]+)*$/.test(param);
