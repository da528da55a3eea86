import { describe, expect, it } from 'vitest';
import {
  classifyTextValue,
  columnNameWords,
  emptyPatternCounts,
  isAgeColumnName,
  isCompactDate,
  PATTERN,
  refusalsByColumn,
  screenColumn,
  screenColumnName,
  type ColumnEvidence,
} from './identifierScreen';

// Example values use ranges reserved for documentation or never issued: e-mail domains of
// RFC 2606, IPv4 TEST-NET-1 (RFC 5737), IPv6 2001:db8::/32 (RFC 3849), the fictional
// NANP 555-01xx numbers, and SSN area numbers 900-999, which the SSA never assigns.

describe('value patterns', () => {
  it.each([
    ['person.one@example.org', PATTERN.email],
    ['write to ward.clerk@example.com today', PATTERN.email],
    ['900-12-3456', PATTERN.ssn],
    ['(212) 555-0123', PATTERN.phone],
    ['212-555-0123', PATTERN.phone],
    ['+1 212 555 0123', PATTERN.phone],
    ['+44 20 7946 0958', PATTERN.phone],
    ['192.0.2.17', PATTERN.ipAddress],
    ['2001:db8::ff00:42:8329', PATTERN.ipAddress],
    ['2001:0db8:0000:0000:0000:ff00:0042:8329', PATTERN.ipAddress],
    ['https://example.org/patient/17', PATTERN.url],
    ['www.example.org', PATTERN.url],
    ['2024-03-05', PATTERN.date],
    ['2024-03-05T14:30:00Z', PATTERN.date],
    ['05/03/2024', PATTERN.date],
    ['3/5/24', PATTERN.date],
    ['12.11.2023', PATTERN.date],
    ['5 Mar 2024', PATTERN.date],
    ['March 5, 2024', PATTERN.date],
    ['2024-03', PATTERN.date],
    ['02139-4307', PATTERN.postalCode],
    ['SW1A 1AA', PATTERN.postalCode],
    ['K1A 0B1', PATTERN.postalCode],
  ])('recognises %s', (value, bit) => {
    expect(classifyTextValue(value) & bit).toBe(bit);
  });

  it.each([
    '18-44', '45-64', '80+', 'F', 'Ward-12', 'TVG', 'Tern Valley General', '10:30:00', '14:30', '3.5', 'stage 2',
    '2019-20', '1.2.3', 'none', 'call-back', 'A&E', '2024', '13/13/2024', '4-6 h', 'v2.10.3.1000',
  ])('does not flag the ordinary value %s', (value) => {
    expect(classifyTextValue(value)).toBe(0);
  });

  it('reads YYYYMMDD numbers between 1900 and 2099 as dates, checking month and day', () => {
    const at = (text: string): boolean => isCompactDate(Buffer.from(text), 0);
    expect(at('20240229')).toBe(true);
    expect(at('19991231')).toBe(true);
    expect(at('20241301')).toBe(false);
    expect(at('20240431')).toBe(false);
    expect(at('18991231')).toBe(false);
    expect(at('12345678')).toBe(false);
  });
});

describe('column names', () => {
  it('splits names into words', () => {
    expect(columnNameWords('PatientDOB')).toEqual(['patient', 'dob']);
    expect(columnNameWords('e-mail_Address')).toEqual(['e', 'mail', 'address']);
    expect(columnNameWords('zip5')).toEqual(['zip', '5']);
    expect(columnNameWords('readmitted_30d')).toEqual(['readmitted', '30', 'd']);
  });

  it.each([
    ['patient_name', 'names'],
    ['Surname', 'names'],
    ['first_name', 'names'],
    ['MRN', 'medical-record-number'],
    ['PatientID', 'medical-record-number'],
    ['ssn', 'ssn'],
    ['DOB', 'dates'],
    ['date_of_birth', 'dates'],
    ['admission_date', 'dates'],
    ['zip', 'geography'],
    ['postcode', 'geography'],
    ['home_address', 'geography'],
    ['street', 'geography'],
    ['phone', 'phone'],
    ['fax_number', 'fax'],
    ['email_address', 'email'],
    ['E-mail', 'email'],
    ['account_number', 'account-number'],
    ['member_id', 'health-plan-number'],
    ['licence_number', 'certificate-or-licence-number'],
    ['license', 'certificate-or-licence-number'],
    ['licence_plate', 'vehicle-identifier'],
    ['VIN', 'vehicle-identifier'],
    ['device_serial', 'device-identifier'],
    ['url', 'url'],
    ['ip_address', 'ip-address'],
    ['fingerprint', 'biometric'],
    ['photo', 'face-image'],
    ['uuid', 'unique-code'],
  ])('flags %s as %s', (name, category) => {
    expect(screenColumnName(name)?.category).toBe(category);
  });

  it.each([
    'readmitted_30d', 'call_back', 'age_band', 'sex', 'site', 'site_name', 'ward_name', 'comorbidity_score',
    'prior_admissions', 'early_mobility', 'frailty_score', 'length_of_stay_days', 'ip_admissions', 'dosage',
    'stage', 'admission_year', 'drug_name', 'outcome', 'intervention', 'platelets',
  ])('leaves the analysis column %s alone', (name) => {
    expect(screenColumnName(name)).toBeNull();
  });

  it('knows which names hold ages', () => {
    expect(isAgeColumnName('age')).toBe(true);
    expect(isAgeColumnName('AgeAtAdmission')).toBe(true);
    expect(isAgeColumnName('patient_age')).toBe(true);
    expect(isAgeColumnName('stage')).toBe(false);
    expect(isAgeColumnName('dosage')).toBe(false);
  });
});

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
  });
});
