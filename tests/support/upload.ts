/** Helpers for upload tests: raw HTTP requests that stream a body, and database counts. */
import http from 'node:http';
import { QueryTypes } from 'sequelize';
import { appUrl } from '../browser/harness';
import { ownerDb } from './factories';

export interface StreamedResponse {
  status: number;
  body: string;
  /** Bytes the client had written when the answer arrived. */
  bytesSent: number;
}

/**
 * POSTs a body produced chunk by chunk, without a Content-Length, and stops writing as
 * soon as the server answers (as a browser or curl would when refused early).
 */
export function streamUpload(
  path: string,
  chunks: Iterable<Buffer | string>,
  headers: Record<string, string>,
): Promise<StreamedResponse> {
  const url = new URL(path, appUrl);
  return new Promise((resolve, reject) => {
    let bytesSent = 0;
    let answered = false;
    const request = http.request(url, { method: 'POST', headers: { 'Content-Type': 'text/csv', ...headers } }, (response) => {
      answered = true;
      let body = '';
      response.setEncoding('utf8');
      response.on('data', (chunk: string) => { body += chunk; });
      response.on('end', () => {
        resolve({ status: response.statusCode ?? 0, body, bytesSent });
        request.destroy();
      });
    });
    request.on('error', (error) => {
      if (!answered) reject(error);
    });
    const iterator = chunks[Symbol.iterator]();
    const pump = () => {
      while (!answered) {
        const next = iterator.next();
        if (next.done) {
          request.end();
          return;
        }
        const buffer = typeof next.value === 'string' ? Buffer.from(next.value) : next.value;
        bytesSent += buffer.length;
        if (!request.write(buffer)) {
          request.once('drain', pump);
          return;
        }
      }
    };
    pump();
  });
}

export interface DataCounts {
  extracts: number;
  versions: number;
  columns: number;
  /** Chunks of raw upload files. */
  files: number;
}

/** How many extracts, versions, stored columns and raw-file chunks exist (as the owner sees them). */
export async function dataCounts(): Promise<DataCounts> {
  const [row] = await ownerDb().query<{ extracts: string; versions: string; columns: string; files: string }>(
    `SELECT (SELECT count(*) FROM extracts) AS extracts, (SELECT count(*) FROM extract_versions) AS versions,
            (SELECT count(*) FROM extract_columns) AS columns, (SELECT count(*) FROM extract_files) AS files`,
    { type: QueryTypes.SELECT },
  );
  return { extracts: Number(row.extracts), versions: Number(row.versions), columns: Number(row.columns), files: Number(row.files) };
}
