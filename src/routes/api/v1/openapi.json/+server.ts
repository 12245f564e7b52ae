import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { openApiDocument } from '$lib/server/api/openapi';

/** Public: the API description (no data). */
export const GET: RequestHandler = () => json(openApiDocument());
