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

const us = { regime: 'us-hipaa' } as const;
const uk = { regime: 'uk' } as const;
const generic = { regime: 'generic' } as const;

describe('screenColumn under the US HIPAA Safe Harbor regime', () => {
  it('reports counts, never values', () => {
    const findings = screenColumn(evidence({ name: 'contact', patterns: { ...emptyPatternCounts(), email: 37 } }), us);
    expect(findings).toEqual([
      {
        column: 'contact',
        columnIndex: 0,
        rule: 'email-pattern',
        category: 'email',
        matchedCount: 37,
        examinedCount: 100,
        message: 'Column "contact": 37 values of 100 examined look like e-mail addresses.',
        regime: 'us-hipaa',
      },
    ]);
  });

  it('needs half the values for plain 5-digit and 8-digit numbers, one value for formatted ones', () => {
    const half = { ...emptyPatternCounts(), fiveDigitNumbers: 50 };
    expect(screenColumn(evidence({ patterns: half }), us).map((f) => f.rule)).toEqual(['postal-code-pattern']);
    const fewer = { ...emptyPatternCounts(), fiveDigitNumbers: 49 };
    expect(screenColumn(evidence({ patterns: fewer }), us)).toEqual([]);
    const formatted = { ...emptyPatternCounts(), postalCode: 1 };
    expect(screenColumn(evidence({ patterns: formatted }), us)[0].matchedCount).toBe(1);
    const compact = { ...emptyPatternCounts(), compactDates: 60 };
    expect(screenColumn(evidence({ patterns: compact }), us)[0]).toMatchObject({ rule: 'date-pattern', matchedCount: 60 });
  });

  it('flags ages over 89 in an age column only', () => {
    const values = Float64Array.from([95, 40, 89, 90, NaN, 89.5]);
    const age = screenColumn(evidence({ name: 'age', numericValues: values, rowCount: 6, nonMissing: 5, distinct: 5 }), us);
    // 95, 90 and 89.5 are over 89 (89 itself is not).
    expect(age).toHaveLength(1);
    expect(age[0]).toMatchObject({ rule: 'age-over-89', matchedCount: 3, examinedCount: 5 });
    expect(age[0].message).toMatch(/3 ages are over 89/);
    expect(screenColumn(evidence({ name: 'weight_kg', numericValues: values, rowCount: 6, nonMissing: 5 }), us)).toEqual([]);
  });

  it('flags near-unique code-like columns with enough values (distinct / non-missing > 0.9)', () => {
    // 91 distinct of 100: 0.91 > 0.9.
    expect(screenColumn(evidence({ distinct: 91 }), us)[0]).toMatchObject({ rule: 'near-unique', matchedCount: 91 });
    // 90 of 100 is not over 0.9.
    expect(screenColumn(evidence({ distinct: 90 }), us)).toEqual([]);
    // Too few values for the rule (default minimum 50).
    expect(screenColumn(evidence({ distinct: 49, nonMissing: 49, rowCount: 49 }), us)).toEqual([]);
    // Decimal measurements are not codes.
    expect(screenColumn(evidence({ distinct: 100, codeLike: false }), us)).toEqual([]);
    expect(screenColumn(evidence({ levelsOverflowed: true, distinct: null }), us)[0].rule).toBe('too-many-levels');
  });

  it('joins a column\'s findings into one message', () => {
    const findings = [
      ...screenColumn(evidence({ name: 'email', index: 2, distinct: 100, patterns: { ...emptyPatternCounts(), email: 100 } }), us),
      ...screenColumn(evidence({ name: 'zip', index: 1 }), us),
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

describe('screenColumn under the UK regime', () => {
  const patterns = (counts: Partial<ReturnType<typeof emptyPatternCounts>>) => ({ ...emptyPatternCounts(), ...counts });

  it('catches NHS numbers whose check digit holds: one formatted value, or half a column of plain numbers', () => {
    const formatted = screenColumn(evidence({ name: 'ref', patterns: patterns({ nhsNumber: 1 }) }), uk);
    expect(formatted).toEqual([
      {
        column: 'ref', columnIndex: 0, rule: 'nhs-number-pattern', category: 'nhs-number', matchedCount: 1, examinedCount: 100,
        message: 'Column "ref": 1 value of 100 examined looks like NHS numbers (their check digit holds).', regime: 'uk',
      },
    ]);
    expect(screenColumn(evidence({ patterns: patterns({ plainNhsNumbers: 50 }) }), uk).map((f) => f.rule)).toEqual(['nhs-number-pattern']);
    expect(screenColumn(evidence({ patterns: patterns({ plainNhsNumbers: 49 }) }), uk)).toEqual([]);
    // Not a rule of the other regimes.
    expect(screenColumn(evidence({ patterns: patterns({ nhsNumber: 5 }) }), us)).toEqual([]);
    expect(screenColumn(evidence({ patterns: patterns({ nhsNumber: 5 }) }), generic)).toEqual([]);
  });

  it('catches National Insurance numbers and full postcodes, not ZIP codes or SSNs', () => {
    expect(screenColumn(evidence({ patterns: patterns({ niNumber: 2 }) }), uk)[0]).toMatchObject({ rule: 'ni-number-pattern', category: 'national-insurance-number', matchedCount: 2 });
    expect(screenColumn(evidence({ patterns: patterns({ ukPostcode: 3 }) }), uk)[0]).toMatchObject({ rule: 'postal-code-pattern', matchedCount: 3 });
    expect(screenColumn(evidence({ patterns: patterns({ ukPostcode: 3 }) }), uk)[0].message).toMatch(/full postcodes/);
    expect(screenColumn(evidence({ patterns: patterns({ fiveDigitNumbers: 100, postalCode: 4, ssn: 3 }) }), uk)).toEqual([]);
  });

  it('keeps the common rules, worded without Safe Harbor', () => {
    expect(screenColumn(evidence({ patterns: patterns({ phone: 1, email: 1, date: 1 }) }), uk).map((f) => f.rule)).toEqual(['phone-pattern', 'email-pattern', 'date-pattern']);
    const [name] = screenColumn(evidence({ name: 'nhs_number' }), uk);
    expect(name.message).toBe('Column "nhs_number": its name suggests NHS numbers, an identifier under the ICO\'s anonymisation guidance.');
    const age = screenColumn(evidence({ name: 'age', numericValues: Float64Array.from([95, 40]), rowCount: 2, nonMissing: 2, distinct: 2 }), uk);
    expect(age[0].message).not.toMatch(/Safe Harbor/);
    expect(age[0].regime).toBe('uk');
  });
});

describe('screenColumn under the US regime, its own patterns', () => {
  it('catches ZIP+4 codes and SSNs', () => {
    // classifyTextValue('02139-4307') sets the postalCode bit (valuePatterns.test.ts).
    const zip = screenColumn(evidence({ name: 'area', patterns: { ...emptyPatternCounts(), postalCode: 1 } }), us);
    expect(zip[0]).toMatchObject({ rule: 'postal-code-pattern', category: 'geography', matchedCount: 1, regime: 'us-hipaa' });
    expect(zip[0].message).toMatch(/ZIP or postal codes/);
    expect(screenColumn(evidence({ patterns: { ...emptyPatternCounts(), ssn: 1 } }), us)[0].rule).toBe('ssn-pattern');
    // The UK's own numbers are not US rules.
    expect(screenColumn(evidence({ patterns: { ...emptyPatternCounts(), niNumber: 1, plainNhsNumbers: 100 } }), us)).toEqual([]);
  });
});

describe('screenColumn under the generic regime', () => {
  it('applies the common rules and formatted postal codes only', () => {
    const counts = { ...emptyPatternCounts(), email: 1, phone: 1, date: 1, postalCode: 1, ssn: 1, niNumber: 1, fiveDigitNumbers: 100 };
    const findings = screenColumn(evidence({ name: 'zip', patterns: counts }), generic);
    expect(findings.map((f) => f.rule)).toEqual(['column-name', 'phone-pattern', 'email-pattern', 'date-pattern', 'postal-code-pattern']);
    expect(findings[0].message).toBe('Column "zip": its name suggests addresses or postal codes, a direct identifier.');
    expect(findings[4]).toMatchObject({ matchedCount: 1, regime: 'generic' });
  });
});
