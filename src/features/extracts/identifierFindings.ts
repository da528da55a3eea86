/**
 * What the identifier screen reports: the identifier categories it can recognise (the
 * Safe Harbor list of 45 CFR 164.514(b)(2)(i), with the UK's NHS and National Insurance
 * numbers), its stable rule codes, one finding per reason to refuse a column (counts,
 * never values, and the privacy regime whose rules applied), and the findings joined into
 * one refusal per column.
 */
import type { PrivacyRegime } from '@/lib/privacyRegime';

/** Identifier categories the screen can recognise (plus ages over 89, a separate rule). */
export type IdentifierCategory =
  | 'names'
  | 'geography'
  | 'dates'
  | 'phone'
  | 'fax'
  | 'email'
  | 'ssn'
  | 'nhs-number'
  | 'national-insurance-number'
  | 'medical-record-number'
  | 'health-plan-number'
  | 'account-number'
  | 'certificate-or-licence-number'
  | 'vehicle-identifier'
  | 'device-identifier'
  | 'url'
  | 'ip-address'
  | 'biometric'
  | 'face-image'
  | 'unique-code'
  | 'age-over-89';

/** Stable rule codes of the screen. */
export type FindingRule =
  | 'column-name'
  | 'ssn-pattern'
  | 'nhs-number-pattern'
  | 'ni-number-pattern'
  | 'phone-pattern'
  | 'email-pattern'
  | 'ip-address-pattern'
  | 'url-pattern'
  | 'date-pattern'
  | 'postal-code-pattern'
  | 'age-over-89'
  | 'near-unique'
  | 'too-many-levels';

/** One reason to refuse a column. */
export interface Finding {
  /** Column name as written in the header. */
  column: string;
  /** 0-based position in the header. */
  columnIndex: number;
  rule: FindingRule;
  category: IdentifierCategory;
  /** Values that matched the rule (null for rules about the name). */
  matchedCount: number | null;
  /** Non-missing values the rule examined (null for rules about the name). */
  examinedCount: number | null;
  /** Plain-English explanation; contains counts, never values. */
  message: string;
  /** The privacy regime whose rules the screen applied. */
  regime: PrivacyRegime;
}

/** One refusal message per column, joining that column's findings. */
export interface ColumnRefusal {
  column: string;
  columnIndex: number;
  rules: FindingRule[];
  categories: IdentifierCategory[];
  message: string;
}

/**
 * Groups findings by column (in column order) into one message each, as the upload page
 * and the refusal record show them.
 */
export function refusalsByColumn(findings: readonly Finding[]): ColumnRefusal[] {
  const byColumn = new Map<number, Finding[]>();
  for (const f of findings) {
    const list = byColumn.get(f.columnIndex);
    if (list) list.push(f);
    else byColumn.set(f.columnIndex, [f]);
  }
  return [...byColumn.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([columnIndex, list]) => {
      const column = list[0].column;
      const reasons = list.map((f) => f.message.replace(`Column "${column}": `, '').replace(/\.$/, ''));
      return {
        column,
        columnIndex,
        rules: list.map((f) => f.rule),
        categories: [...new Set(list.map((f) => f.category))],
        message: `Column "${column}" may identify people: ${reasons.join('; ')}. Remove the column (or drop it while uploading) and upload again${
          list.every((f) => f.rule === 'column-name') ? ', or, when its values are not identifiers, keep it and say why' : ''
        }.`,
      };
    });
}
