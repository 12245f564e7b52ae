import type { ParamMatcher } from '@sveltejs/kit';
import { isId } from '$lib/id';

/**
 * A record id in a URL: a canonical positive integer ("1", "42"), nothing else (`$lib/id`). " 1", "01",
 * "0x10", "1e3", "1.0" and "-1" do not match, so the route answers 404 before any query runs.
 */
export const match = ((param: string): param is `${number}` => isId(param)) satisfies ParamMatcher;
