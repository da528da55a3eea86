/**
 * Helpers shared by the extract tests: chunked sources and a sink that records rows.
 * Not imported by product code.
 */
import type { CsvSink } from './csvReader';

/** Splits `input` into chunks of `size` bytes (1 = byte by byte). */
export function* chunked(input: string | Uint8Array, size: number): Generator<Uint8Array> {
  const bytes = typeof input === 'string' ? Buffer.from(input, 'utf8') : input;
  for (let i = 0; i < bytes.length; i += size) yield bytes.subarray(i, Math.min(bytes.length, i + size));
}

/** A sink that keeps every record as strings (for small test files only). */
export class RecordingSink implements CsvSink {
  names: string[] = [];
  records: string[][] = [];
  private current: string[] = [];
  private readonly decoder = new TextDecoder();

  header(names: readonly string[]): void {
    this.names = names.slice();
  }

  field(column: number, bytes: Uint8Array, start: number, end: number): void {
    this.current[column] = this.decoder.decode(bytes.subarray(start, end));
  }

  endRecord(): void {
    this.records.push(this.current);
    this.current = [];
  }
}
