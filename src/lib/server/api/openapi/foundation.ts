import { jsonResponse, type OpenApiPaths } from './build';

export const foundationPaths: OpenApiPaths = {
	'/openapi.json': {
		get: { summary: 'This document', security: [], responses: { '200': jsonResponse('OpenAPI 3.1 document') } }
	}
};
