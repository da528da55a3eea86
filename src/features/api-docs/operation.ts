/** One documented endpoint of the OpenAPI catalogue. */
import type { ZodType } from 'zod';

export type Auth = 'none' | 'session' | 'admin';

export interface Operation {
  method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  /** OpenAPI path with {params}. */
  path: string;
  tag: string;
  summary: string;
  description?: string;
  auth: Auth;
  query?: ZodType;
  /** Request headers the endpoint reads (documented as header parameters). */
  headers?: { name: string; description: string; required?: boolean }[];
  body?: ZodType;
  /** The body content type when it is not JSON (uploads). */
  bodyType?: string;
  response?: ZodType;
  status: number;
}
