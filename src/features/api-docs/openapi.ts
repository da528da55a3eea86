/** Builds the OpenAPI 3.1 document from the endpoint catalogue's zod schemas. */
import { z, type ZodType } from 'zod';
import { OPERATIONS, type Operation } from './apiCatalogue';
import { APP_VERSION } from '@/lib/server/version';

type JsonSchema = Record<string, unknown>;

const ErrorBody = z
  .object({
    error: z.object({
      code: z.string().describe('A stable machine-readable code, e.g. `validation-failed`.'),
      message: z.string(),
      details: z.array(z.object({ path: z.string(), message: z.string() })).optional(),
      requestId: z.string().optional(),
    }),
  })
  .meta({ id: 'Error' });

/**
 * Converts a schema. Named schemas (`.meta({ id })`) land in components and are
 * referenced; zod emits them as `$defs`, which are hoisted and their references rewritten.
 * Where a schema's output form differs from its input form (defaults make fields
 * required), the output form is named `<id>Output`.
 */
function schemaOf(schema: ZodType, io: 'input' | 'output', components: Record<string, JsonSchema>): JsonSchema {
  const converted = z.toJSONSchema(schema, { io, unrepresentable: 'any', target: 'draft-2020-12' }) as JsonSchema;
  delete converted.$schema;
  const defs = (converted.$defs ?? {}) as Record<string, JsonSchema>;
  delete converted.$defs;
  const names: Record<string, string> = {};
  for (const [id, definition] of Object.entries(defs)) {
    const taken = components[id] && JSON.stringify(components[id]) !== JSON.stringify(definition);
    names[id] = taken && io === 'output' ? `${id}Output` : id;
  }
  const rewrite = (value: unknown): unknown => {
    if (Array.isArray(value)) return value.map(rewrite);
    if (!value || typeof value !== 'object') return value;
    return Object.fromEntries(
      Object.entries(value).map(([key, inner]) =>
        key === '$ref' && typeof inner === 'string' && inner.startsWith('#/$defs/')
          ? [key, `#/components/schemas/${names[inner.slice('#/$defs/'.length)]}`]
          : [key, rewrite(inner)],
      ),
    );
  };
  for (const [id, definition] of Object.entries(defs)) components[names[id]] = rewrite(definition) as JsonSchema;
  return rewrite(converted) as JsonSchema;
}

function parameters(operation: Operation, components: Record<string, JsonSchema>) {
  const list: Record<string, unknown>[] = [];
  for (const match of operation.path.matchAll(/\{(\w+)\}/g)) {
    list.push({ name: match[1], in: 'path', required: true, schema: { type: 'string' } });
  }
  if (operation.query) {
    const converted = schemaOf(operation.query, 'input', {}) as { properties?: Record<string, JsonSchema>; required?: string[] };
    for (const [name, schema] of Object.entries(converted.properties ?? {})) {
      list.push({ name, in: 'query', required: converted.required?.includes(name) ?? false, schema });
    }
  }
  for (const header of operation.headers ?? []) {
    list.push({ name: header.name, in: 'header', required: header.required ?? false, description: header.description, schema: { type: 'string' } });
  }
  void components;
  return list;
}

/** The OpenAPI 3.1 document of every endpoint. */
export function openApiDocument(): Record<string, unknown> {
  const components: Record<string, JsonSchema> = {};
  const errorRef = schemaOf(ErrorBody, 'output', components);
  const paths: Record<string, Record<string, unknown>> = {};
  for (const operation of OPERATIONS) {
    const errorResponses: Record<string, unknown> = {
      '400': { description: 'Invalid input; `details` names each field.', content: { 'application/json': { schema: errorRef } } },
    };
    if (operation.auth !== 'none') {
      errorResponses['401'] = { description: 'Not signed in, or the session expired.', content: { 'application/json': { schema: errorRef } } };
      errorResponses['403'] = { description: 'Signed in but not allowed.', content: { 'application/json': { schema: errorRef } } };
      errorResponses['404'] = { description: 'Not found, or not visible to you.', content: { 'application/json': { schema: errorRef } } };
    }
    const success: Record<string, unknown> = { description: operation.summary };
    if (operation.response) success.content = { 'application/json': { schema: schemaOf(operation.response, 'output', components) } };
    const entry: Record<string, unknown> = {
      tags: [operation.tag],
      summary: operation.summary,
      ...(operation.description ? { description: operation.description } : {}),
      operationId: `${operation.method.toLowerCase()}${operation.path.replace(/[{}]/g, '').replace(/[^a-zA-Z0-9]+(.)/g, (_m, c: string) => c.toUpperCase())}`,
      parameters: parameters(operation, components),
      responses: { [String(operation.status)]: success, ...errorResponses },
      security: operation.auth === 'none' ? [] : [{ sessionCookie: [] }, { personalToken: [] }],
    };
    if (operation.body) {
      entry.requestBody = {
        required: true,
        content: { [operation.bodyType ?? 'application/json']: { schema: schemaOf(operation.body, 'input', components) } },
      };
    }
    paths[operation.path] ??= {};
    paths[operation.path][operation.method.toLowerCase()] = entry;
  }
  return {
    openapi: '3.1.0',
    info: {
      title: 'Crossgrain API',
      version: APP_VERSION,
      description:
        'The JSON API of Crossgrain, the effect-modification review board. Scripts authenticate with a personal API token ' +
        '(`Authorization: Bearer cgt_…`, created on the profile page) and act with the owner\'s roles; every use is audited. ' +
        'State-changing requests must declare `Content-Type: application/json` (or `text/csv` for uploads), even without a body. ' +
        'Results are exploratory and not clinical guidance.',
    },
    servers: [{ url: '/' }],
    paths,
    components: {
      schemas: components,
      securitySchemes: {
        sessionCookie: { type: 'apiKey', in: 'cookie', name: 'crossgrain_session', description: 'Set by POST /api/auth/sign-in (`__Host-crossgrain_session` in production).' },
        personalToken: { type: 'http', scheme: 'bearer', description: 'A personal API token from the profile page.' },
      },
    },
  };
}
