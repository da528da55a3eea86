import { describe, expect, it } from 'vitest';
import { refusalsByColumn } from './identifierFindings';
import { screenColumn, type ColumnEvidence } from './identifierScreen';
import { emptyPatternCounts } from './valuePatterns';

function evidence(overrides: Partial<ColumnEvidence>): ColumnEvidence {
  return {
    name: 'values',
    index: 0,
    nonMissing: 100,
    patterns: emptyPatternCounts(),
    numericValues: null,
    rowCount: 100,
    distinct: 5,
    codeLike: true,
    levelsOverflowed: false,
    levelCap: 50_000,
    ...overrides,
  };
}

describe('screenColumn', () => {
  it('reports counts, never values', () => {
    const findings = screenColumn(evidence({ name: 'contact', patterns: { ...emptyPatternCounts(), email: 37 } }));
    expect(findings).toEqual([
      {
        column: 'contact',
        columnIndex: 0,
        rule: 'email-pattern',
        category: 'email',
        matchedCount: 37,
        examinedCount: 100,
        message: 'Column "contact": 37 values of 100 examined look like e-mail addresses.',
      },
    ]);
  });

  it('needs half the values for plain 5-digit and 8-digit numbers, one value for formatted ones', () => {
    const half = { ...emptyPatternCounts(), fiveDigitNumbers: 50 };
    expect(screenColumn(evidence({ patterns: half })).map((f) => f.rule)).toEqual(['postal-code-pattern']);
    const fewer = { ...emptyPatternCounts(), fiveDigitNumbers: 49 };
    expect(screenColumn(evidence({ patterns: fewer }))).toEqual([]);
    const formatted = { ...emptyPatternCounts(), postalCode: 1 };
    expect(screenColumn(evidence({ patterns: formatted }))[0].matchedCount).toBe(1);
    const compact = { ...emptyPatternCounts(), compactDates: 60 };
    expect(screenColumn(evidence({ patterns: compact }))[0]).toMatchObject({ rule: 'date-pattern', matchedCount: 60 });
  });

  it('flags ages over 89 in an age column only', () => {
    const values = Float64Array.from([95, 40, 89, 90, NaN, 89.5]);
    const age = screenColumn(evidence({ name: 'age', numericValues: values, rowCount: 6, nonMissing: 5, distinct: 5 }));
    // 95, 90 and 89.5 are over 89 (89 itself is not).
    expect(age).toHaveLength(1);
    expect(age[0]).toMatchObject({ rule: 'age-over-89', matchedCount: 3, examinedCount: 5 });
    expect(age[0].message).toMatch(/3 ages are over 89/);
    expect(screenColumn(evidence({ name: 'weight_kg', numericValues: values, rowCount: 6, nonMissing: 5 }))).toEqual([]);
  });

  it('flags near-unique code-like columns with enough values (distinct / non-missing > 0.9)', () => {
    // 91 distinct of 100: 0.91 > 0.9.
    expect(screenColumn(evidence({ distinct: 91 }))[0]).toMatchObject({ rule: 'near-unique', matchedCount: 91 });
    // 90 of 100 is not over 0.9.
    expect(screenColumn(evidence({ distinct: 90 }))).toEqual([]);
    // Too few values for the rule (default minimum 50).
    expect(screenColumn(evidence({ distinct: 49, nonMissing: 49, rowCount: 49 }))).toEqual([]);
    // Decimal measurements are not codes.
    expect(screenColumn(evidence({ distinct: 100, codeLike: false }))).toEqual([]);
    expect(screenColumn(evidence({ levelsOverflowed: true, distinct: null }))[0].rule).toBe('too-many-levels');
  });

  it('joins a column\'s findings into one message', () => {
    const findings = [
      ...screenColumn(evidence({ name: 'email', index: 2, distinct: 100, patterns: { ...emptyPatternCounts(), email: 100 } })),
      ...screenColumn(evidence({ name: 'zip', index: 1 })),
    ];
    expect(findings.map((f) => f.rule)).toEqual(['column-name', 'email-pattern', 'near-unique', 'column-name']);
    const refusals = refusalsByColumn(findings);
    expect(refusals.map((r) => r.column)).toEqual(['zip', 'email']);
    expect(refusals[1].rules).toEqual(['column-name', 'email-pattern', 'near-unique']);
    expect(refusals[1].message).toBe(
      'Column "email" may identify people: its name suggests e-mail addresses, a Safe Harbor identifier; 100 values of 100 examined look like e-mail addresses; 100 distinct values among 100 (over 90% unique), so it behaves like an identifying code. Remove the column (or drop it while uploading) and upload again.',
    );
    // A column flagged by its name alone may be kept; the message says so (from the product rule, issue 12 section 1).
    expect(refusals[0].message).toBe(
      'Column "zip" may identify people: its name suggests geographic units smaller than a state (addresses, ZIP or postal codes), a Safe Harbor identifier. Remove the column (or drop it while uploading) and upload again, or, when its values are not identifiers, keep it and say why.',
    );
  });
});
