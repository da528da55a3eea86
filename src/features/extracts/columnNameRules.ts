/**
 * The identifier screen's rules on column names: a name is split into lower-case words
 * (`PatientDOB` -> `patient dob`) and matched against word lists per identifier category;
 * a person's-name rule is not triggered by names of things (`site_name`). The rules apply
 * under every privacy regime (a column called `ssn` is suspect anywhere); a few labels
 * follow the regime's wording.
 */
import type { PrivacyRegime } from '@/lib/privacyRegime';
import type { IdentifierCategory } from './identifierFindings';

/**
 * Splits a column name into lower-case words: `PatientDOB` -> `patient dob`,
 * `e-mail_address` -> `e mail address`, `zip5` -> `zip 5`.
 */
export function columnNameWords(name: string): string[] {
  return name
    .replace(/([a-z])([A-Z])/g, '$1 $2')
    .replace(/([A-Z]+)([A-Z][a-z])/g, '$1 $2')
    .replace(/([A-Za-z])(\d)/g, '$1 $2')
    .replace(/(\d)([A-Za-z])/g, '$1 $2')
    .toLowerCase()
    .split(/[^a-z0-9]+/)
    .filter((w) => w !== '');
}

interface NameRule {
  category: IdentifierCategory;
  /** Single words that flag the column wherever they appear. */
  words?: readonly string[];
  /** Word sequences that flag the column when they appear consecutively. */
  phrases?: readonly (readonly string[])[];
  /** Whole names (after joining the words with nothing) that flag the column. */
  whole?: readonly string[];
  label: string;
  /** The label in a regime's own wording, where it differs. */
  labelIn?: Partial<Record<PrivacyRegime, string>>;
}

// Words that make "name" mean the name of a thing rather than a person.
const THING_QUALIFIERS = new Set([
  'site', 'hospital', 'ward', 'unit', 'drug', 'procedure', 'diagnosis', 'facility', 'department',
  'dept', 'program', 'programme', 'initiative', 'file', 'column', 'variable', 'test', 'lab', 'med',
  'medication', 'org', 'organisation', 'organization', 'practice', 'clinic', 'team', 'service',
  'specialty', 'insurer', 'payer', 'plan', 'product', 'device', 'code', 'group', 'category', 'region',
  'trust', 'country', 'state', 'arm', 'intervention', 'outcome', 'study', 'trial', 'protocol',
]);

// Order matters where words overlap: "ip address" and "email address" are not street addresses,
// "licence plate" is a vehicle and "licence number" a licence.
const NAME_RULES: readonly NameRule[] = [
  {
    category: 'names',
    label: "people's names",
    words: ['surname', 'forename', 'firstname', 'lastname', 'fullname', 'givenname', 'familyname', 'fname', 'lname', 'initials', 'maiden', 'nickname'],
    phrases: [['first', 'name'], ['last', 'name'], ['given', 'name'], ['family', 'name'], ['middle', 'name'], ['full', 'name'], ['maiden', 'name']],
    whole: ['name', 'first', 'last', 'names', 'patient', 'patientname'],
  },
  { category: 'email', label: 'e-mail addresses', words: ['email', 'emails', 'emailaddress'], phrases: [['e', 'mail']] },
  // A bare "ip" often means inpatient in hospital data, so only the whole name or "ip address".
  { category: 'ip-address', label: 'IP addresses', words: ['ipv4', 'ipv6', 'ipaddress'], whole: ['ip'], phrases: [['ip', 'address'], ['ip', 'addr']] },
  {
    category: 'device-identifier',
    label: 'device identifiers or serial numbers',
    words: ['serial', 'imei', 'udi', 'deviceid'],
    phrases: [['device', 'id'], ['device', 'identifier'], ['device', 'number'], ['device', 'serial'], ['mac', 'address']],
  },
  { category: 'url', label: 'web addresses (URLs)', words: ['url', 'urls', 'uri', 'website', 'webpage', 'homepage', 'link'], phrases: [['web', 'address']] },
  {
    category: 'geography',
    label: 'geographic units smaller than a state (addresses, ZIP or postal codes)',
    labelIn: { uk: 'addresses or postcodes', generic: 'addresses or postal codes' },
    words: ['zip', 'zipcode', 'postcode', 'postal', 'postalcode', 'address', 'addr', 'street', 'city', 'town', 'county', 'latitude', 'longitude', 'lat', 'lng', 'lon', 'geocode', 'tract', 'suburb', 'village'],
    phrases: [['post', 'code'], ['census', 'block']],
  },
  {
    category: 'dates',
    label: 'dates (all date elements but the year)',
    labelIn: { uk: 'dates of birth or other full dates', generic: 'full dates' },
    words: ['dob', 'dod', 'date', 'dates', 'dt', 'datetime', 'timestamp', 'birthdate', 'birthday', 'month', 'dateofbirth'],
    phrases: [['birth', 'date'], ['date', 'of', 'birth'], ['date', 'of', 'death'], ['birth', 'month'], ['birth', 'day']],
  },
  { category: 'phone', label: 'telephone numbers', words: ['phone', 'telephone', 'tel', 'mobile', 'cellphone', 'phonenumber'] },
  { category: 'fax', label: 'fax numbers', words: ['fax', 'facsimile'] },
  {
    category: 'ssn',
    label: 'social security numbers',
    words: ['ssn', 'ssns', 'socsec'],
    phrases: [['social', 'security'], ['social', 'insurance']],
  },
  {
    category: 'national-insurance-number',
    label: 'National Insurance numbers',
    words: ['nino', 'ninumber', 'ninos'],
    phrases: [['national', 'insurance'], ['ni', 'number'], ['ni', 'no']],
  },
  {
    category: 'nhs-number',
    label: 'NHS numbers',
    words: ['nhsnumber', 'nhsno', 'nhsnum'],
    phrases: [['nhs', 'number'], ['nhs', 'no'], ['nhs', 'num'], ['nhs', 'id']],
  },
  {
    category: 'medical-record-number',
    label: 'medical record or patient numbers',
    labelIn: { uk: 'hospital or patient numbers' },
    words: ['mrn', 'mrns', 'emrn', 'patientid'],
    phrases: [['medical', 'record'], ['patient', 'id'], ['patient', 'number'], ['hospital', 'number'], ['chart', 'number'], ['person', 'id'], ['record', 'number'], ['unit', 'number'], ['health', 'record']],
  },
  {
    category: 'health-plan-number',
    label: 'health-plan beneficiary numbers',
    words: ['medicaid', 'hicn', 'mbi', 'beneficiary', 'subscriber'],
    phrases: [['health', 'plan'], ['insurance', 'number'], ['insurance', 'id'], ['member', 'id'], ['member', 'number'], ['policy', 'number'], ['medicare', 'number'], ['medicare', 'id']],
  },
  { category: 'account-number', label: 'account numbers', words: ['account', 'accounts', 'acct', 'iban'], phrases: [['billing', 'number'], ['invoice', 'number']] },
  {
    category: 'vehicle-identifier',
    label: 'vehicle identifiers (licence plates, VINs)',
    words: ['vin', 'plate', 'numberplate'],
    phrases: [['licence', 'plate'], ['license', 'plate'], ['vehicle', 'id'], ['vehicle', 'identifier'], ['vehicle', 'number'], ['vehicle', 'registration']],
  },
  {
    category: 'certificate-or-licence-number',
    label: 'certificate or licence numbers',
    words: ['licence', 'license', 'certificate', 'passport', 'npi', 'dea'],
    phrases: [['driver', 'licence'], ['drivers', 'license']],
  },
  { category: 'biometric', label: 'biometric identifiers', words: ['fingerprint', 'fingerprints', 'biometric', 'biometrics', 'retina', 'iris', 'voiceprint'] },
  { category: 'face-image', label: 'photographs or face images', words: ['photo', 'photograph', 'photos', 'image', 'images', 'picture', 'portrait', 'selfie'], phrases: [['face', 'image']] },
  { category: 'unique-code', label: 'unique identifying codes', words: ['uuid', 'guid'] },
];

function containsPhrase(words: readonly string[], phrase: readonly string[]): boolean {
  outer: for (let i = 0; i + phrase.length <= words.length; i++) {
    for (let k = 0; k < phrase.length; k++) if (words[i + k] !== phrase[k]) continue outer;
    return true;
  }
  return false;
}

/** Whether a column's name says it holds ages (so values over 89 are identifying). */
export function isAgeColumnName(name: string): boolean {
  const words = columnNameWords(name);
  return words.includes('age') || words.includes('ages') || /^age(at|in|years|yrs)/.test(words.join(''));
}

/**
 * The identifier category a column's name points at, with its label in the regime's
 * wording, or null. A person's-name rule is not triggered by names of things
 * (`site_name`, `ward_name`).
 */
export function screenColumnName(name: string, regime: PrivacyRegime): { category: IdentifierCategory; label: string } | null {
  const words = columnNameWords(name);
  if (words.length === 0) return null;
  const joined = words.join('');
  for (const rule of NAME_RULES) {
    let hit = false;
    if (rule.whole?.includes(joined)) hit = true;
    if (!hit && rule.words?.some((w) => words.includes(w) || joined === w)) hit = true;
    if (!hit && rule.phrases?.some((p) => containsPhrase(words, p))) hit = true;
    if (!hit && rule.category === 'names') {
      // "name" next to a word that is not a thing: patient_name, nok_name, name_of_patient.
      const at = words.indexOf('name');
      if (at >= 0 && !words.some((w) => THING_QUALIFIERS.has(w))) hit = true;
    }
    if (hit) return { category: rule.category, label: rule.labelIn?.[regime] ?? rule.label };
  }
  return null;
}
