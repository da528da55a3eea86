/**
 * Keeping what is worked out from an initiative's records in memory for as long as those
 * records stay the same. Each initiative has a counter (table initiative_stamps) that
 * triggers move in the transaction of every change to a record its pages show (migration
 * add-initiative-stamps). A value kept under one reading of the counter is served again
 * only while a later reading gives the same number.
 *
 * Read the counter before the records the value is worked out from: a change committed in
 * between then leaves a value a little newer than its counter says, never older, and the
 * next reading (already moved) works it out again. Counters come from one sequence, so the
 * number a rolled-back change took is never given again: a value worked out inside a
 * transaction that changed the records cannot be served for anything else.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { sequelize } from './db';

/** The initiative's counter as the caller's transaction sees it ('0' when the caller may not see it). */
export async function initiativeStamp(transaction: Transaction, initiativeId: string): Promise<string> {
  // A single-column counter read: raw SQL.
  const [row] = await sequelize.query<{ stamp: string }>('SELECT stamp FROM initiative_stamps WHERE initiative_id = :initiativeId', {
    replacements: { initiativeId },
    type: QueryTypes.SELECT,
    transaction,
  });
  return row ? String(row.stamp) : '0';
}

/** Values keyed by an id, each with the counter it was worked out under; the least recently used go first. */
export class StampedCache<V> {
  private readonly entries = new Map<string, { stamp: string; value: V }>();

  constructor(private readonly capacity = 1000) {}

  /** The value kept for `key` under exactly `stamp`, or undefined. */
  get(key: string, stamp: string): V | undefined {
    const entry = this.entries.get(key);
    if (!entry || entry.stamp !== stamp) return undefined;
    // Most recently used last.
    this.entries.delete(key);
    this.entries.set(key, entry);
    return entry.value;
  }

  set(key: string, stamp: string, value: V): void {
    this.entries.delete(key);
    this.entries.set(key, { stamp, value });
    while (this.entries.size > this.capacity) this.entries.delete(this.entries.keys().next().value as string);
  }

  /** Working it out on a miss. */
  async through(key: string, stamp: string, work: () => Promise<V>): Promise<V> {
    const kept = this.get(key, stamp);
    if (kept !== undefined) return kept;
    const value = await work();
    this.set(key, stamp, value);
    return value;
  }
}
