import type { ParamMatcher } from '@sveltejs/kit';

/** A positive database id without leading zeros, within PostgreSQL's integer range. */
export const match: ParamMatcher = (param) => /^[1-9][0-9]{0,9}$/.test(param) && Number(param) <= 2_147_483_647;
