import { endpoint, json } from '@/lib/server/http';
import { openApiDocument } from '@/features/api-docs/openapi';

/** GET /api/openapi.json: the OpenAPI 3.1 description of every endpoint. */
export const GET = endpoint(() => json(openApiDocument()));
