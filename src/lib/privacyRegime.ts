/**
 * The privacy regime a deployment follows: which rules of de-identification the upload
 * screen applies and which wording the product uses when it cites them (upload help,
 * refusal messages, the de-identification statement, briefs). Chosen once per
 * deployment with CROSSGRAIN_PRIVACY_REGIME (src/lib/server/env.ts).
 *
 * - `us-hipaa`: the HIPAA Privacy Rule's Safe Harbor method, 45 CFR 164.514(b)(2).
 * - `uk`: the ICO's anonymisation guidance and the NHS's data security wording (NHS
 *   number, National Insurance number, full postcode, date of birth).
 * - `generic`: the identifiers common to every regime, with no law cited.
 *
 * Plumbing only: plain data and wording, no product area imported.
 */

export const PRIVACY_REGIMES = ['us-hipaa', 'uk', 'generic'] as const;
export type PrivacyRegime = (typeof PRIVACY_REGIMES)[number];

/** The regime used when a deployment names none: the demo organisation is a UK partnership. */
export const DEFAULT_PRIVACY_REGIME: PrivacyRegime = 'uk';

/** What the product says about a regime. */
export interface PrivacyRegimeText {
  regime: PrivacyRegime;
  /** A short name, e.g. in an audit view: "HIPAA Safe Harbor". */
  name: string;
  /** The rules cited, in full. */
  citation: string;
  /** How a name finding ends: "…, a Safe Harbor identifier." */
  identifierNoun: string;
  /** The examples the upload help lists. */
  uploadExamples: string;
  /** The statement an analyst signs before a version becomes ready. */
  attestation: string;
  /** The one-line de-identification note beside briefs and the product description. */
  deidentificationNote: string;
}

const TEXTS: Record<PrivacyRegime, PrivacyRegimeText> = {
  'us-hipaa': {
    regime: 'us-hipaa',
    name: 'HIPAA Safe Harbor',
    citation: 'the HIPAA Privacy Rule, Safe Harbor method (45 CFR 164.514(b)(2)), with the HHS OCR guidance on de-identification (2012)',
    identifierNoun: 'a Safe Harbor identifier',
    uploadExamples: 'names, record numbers, full dates, ZIP codes, social security numbers, e-mail addresses, ages over 89, …',
    attestation:
      'I confirm that this extract is de-identified: it contains none of the 18 Safe Harbor identifiers ' +
      '(45 CFR 164.514(b)(2)), no dates finer than the year, no geography smaller than a state, and no ages ' +
      'over 89 except grouped as 90 or older, and that I am authorised to bring it into this initiative.',
    deidentificationNote: 'Extracts are de-identified under the HIPAA Safe Harbor method (45 CFR 164.514(b)(2)).',
  },
  uk: {
    regime: 'uk',
    name: 'UK anonymisation (ICO guidance, NHS data security)',
    citation: "the ICO's guidance on anonymisation and the NHS's data security and protection standards",
    identifierNoun: "an identifier under the ICO's anonymisation guidance",
    uploadExamples: 'names, NHS numbers, National Insurance numbers, full postcodes, dates of birth and other full dates, e-mail addresses, telephone numbers, …',
    attestation:
      'I confirm that this extract is anonymised in line with the ICO\'s anonymisation guidance and the NHS data ' +
      'security and protection standards: it contains no names, addresses or full postcodes, no NHS, hospital or ' +
      'National Insurance numbers, no dates of birth or other full dates, no contact details and no other ' +
      'identifier that could single out a patient, and that I am authorised to bring it into this initiative ' +
      'under my organisation\'s information governance.',
    deidentificationNote: "Extracts are anonymised in line with the ICO's anonymisation guidance and NHS data security wording.",
  },
  generic: {
    regime: 'generic',
    name: 'general de-identification',
    citation: 'general de-identification practice; your organisation\'s own policies and local law come first',
    identifierNoun: 'a direct identifier',
    uploadExamples: 'names, record numbers, full dates, postal codes, e-mail addresses, telephone numbers, …',
    attestation:
      'I confirm that this extract is de-identified: it contains no names, addresses or postal codes, no record ' +
      'or other identifying numbers, no full dates, no contact details and no other identifier that could single ' +
      'out a patient, that it meets my organisation\'s policies and local law, and that I am authorised to bring ' +
      'it into this initiative.',
    deidentificationNote: 'Extracts are de-identified: no direct identifiers, following the deploying organisation\'s own policies.',
  },
};

/** The wording of a regime. */
export function privacyRegimeText(regime: PrivacyRegime): PrivacyRegimeText {
  return TEXTS[regime];
}

