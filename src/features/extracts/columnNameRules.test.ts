import { describe, expect, it } from 'vitest';
import { columnNameWords, isAgeColumnName, screenColumnName } from './columnNameRules';

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
