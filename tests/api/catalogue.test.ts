/**
 * The OpenAPI catalogue matches the routes: every exported method of every file under
 * src/pages/api is documented, and nothing documented is missing. The document is valid
 * OpenAPI 3.1 in shape and its request bodies are the validating zod schemas.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { OPERATIONS } from '@/features/api-docs/apiCatalogue';
import { openApiDocument } from '@/features/api-docs/openapi';

const apiRoot = path.resolve(import.meta.dirname, '../../src/pages/api');

function routeFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const full = path.join(dir, name);
    return statSync(full).isDirectory() ? routeFiles(full) : /\.ts$/.test(name) && !name.startsWith('_') ? [full] : [];
  });
}

/** src/pages/api/admin/users/[id].ts → /api/admin/users/{id}; openapi.json.ts → /api/openapi.json */
function routePath(file: string): string {
  const relative = path.relative(apiRoot, file).replace(/\.ts$/, '').replace(/(^|\/)index$/, '');
  return `/api${relative ? `/${relative}` : ''}`.replace(/\[(\w+)\]/g, '{$1}');
}

const routes = routeFiles(apiRoot).flatMap((file) => {
  const source = readFileSync(file, 'utf8');
  const methods = [...source.matchAll(/export const (GET|POST|PUT|PATCH|DELETE)\b/g)].map((m) => m[1]);
  return methods.map((method) => `${method} ${routePath(file)}`);
});

describe('the API catalogue', () => {
  it('documents exactly the routes that exist (the OpenAPI document itself excepted)', () => {
    const documented = OPERATIONS.map((o) => `${o.method} ${o.path}`).sort();
    const existing = routes.filter((r) => r !== 'GET /api/openapi.json').sort();
    expect(existing.length).toBeGreaterThan(10);
    expect(documented).toEqual(existing);
  });

  it('produces an OpenAPI 3.1 document whose request bodies carry the validation rules', () => {
    const doc = openApiDocument() as {
      openapi: string;
      paths: Record<string, Record<string, { requestBody?: { content: Record<string, { schema: { $ref?: string } }> } }>>;
      components: { schemas: Record<string, { properties?: Record<string, { minLength?: number; format?: string }>; required?: string[] }> };
    };
    expect(doc.openapi).toBe('3.1.0');
    const ref = doc.paths['/api/admin/initiatives'].post.requestBody?.content['application/json'].schema.$ref;
    expect(ref).toBe('#/components/schemas/CreateInitiativeBody');
    const body = doc.components.schemas.CreateInitiativeBody;
    // The name rule (at least 3 characters) comes from the zod schema the endpoint parses with.
    expect(body.properties?.name.minLength).toBe(3);
    expect(body.required).toContain('name');
    expect(doc.components.schemas.SignInBody.required).toEqual(['email', 'password']);
  });
});
