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
    expect(screenColumnName(name, 'us-hipaa')?.category).toBe(category);
  });

  it.each([
    'readmitted_30d', 'call_back', 'age_band', 'sex', 'site', 'site_name', 'ward_name', 'comorbidity_score',
    'prior_admissions', 'early_mobility', 'frailty_score', 'length_of_stay_days', 'ip_admissions', 'dosage',
    'stage', 'admission_year', 'drug_name', 'outcome', 'intervention', 'platelets',
  ])('leaves the analysis column %s alone', (name) => {
    expect(screenColumnName(name, 'us-hipaa')).toBeNull();
  });

  // Name rules apply in every regime; the UK's own identifiers have categories of their own,
  // and labels follow the regime's wording (from the regime texts of src/lib/privacyRegime.ts).
  it.each([
    ['nhs_number', 'nhs-number'],
    ['NHSNo', 'nhs-number'],
    ['nino', 'national-insurance-number'],
    ['national_insurance_number', 'national-insurance-number'],
    ['postcode', 'geography'],
    ['date_of_birth', 'dates'],
    ['ssn', 'ssn'],
  ])('flags %s as %s under the UK regime', (name, category) => {
    expect(screenColumnName(name, 'uk')?.category).toBe(category);
    expect(screenColumnName(name, 'generic')?.category).toBe(category);
  });

  it('words a label in the regime\'s terms', () => {
    expect(screenColumnName('postcode', 'uk')?.label).toBe('addresses or postcodes');
    expect(screenColumnName('zip', 'us-hipaa')?.label).toBe('geographic units smaller than a state (addresses, ZIP or postal codes)');
    expect(screenColumnName('dob', 'uk')?.label).toBe('dates of birth or other full dates');
    expect(screenColumnName('site_name', 'uk')).toBeNull();
  });

  it('knows which names hold ages', () => {
    expect(isAgeColumnName('age')).toBe(true);
    expect(isAgeColumnName('AgeAtAdmission')).toBe(true);
    expect(isAgeColumnName('patient_age')).toBe(true);
    expect(isAgeColumnName('stage')).toBe(false);
    expect(isAgeColumnName('dosage')).toBe(false);
  });
});
