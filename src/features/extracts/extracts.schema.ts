/**
 * zod schemas (and their inferred types) for what the API says about an extract version:
 * the refusal reasons, the identifier-screen findings, the column profile and the data
 * dictionary, plus the body of the confirm request.
 */
import { z } from 'zod';
import { PRIVACY_REGIMES } from '@/lib/privacyRegime';
import { EXTRACT_REFUSAL_CODES } from './extractRefusal';

/** Column types: the four an analysis can use, and the two that refuse the column. */
export const ColumnType = z.enum(['binary', 'categorical', 'continuous', 'count', 'date-like', 'identifier-like']);
export type ColumnType = z.infer<typeof ColumnType>;

/** The types an analyst may confirm or correct a column to. */
export const AnalysableColumnType = z.enum(['binary', 'categorical', 'continuous', 'count']);
export type AnalysableColumnType = z.infer<typeof AnalysableColumnType>;

/** Why the reader refused a file (shape, encoding, size). */
export const RefusalReason = z.object({
  code: z.enum(EXTRACT_REFUSAL_CODES),
  message: z.string(),
  line: z.number().int().positive().nullable(),
});
export type RefusalReason = z.infer<typeof RefusalReason>;

/** Identifier categories of the screen (Safe Harbor's list, with the UK's NHS and National Insurance numbers). */
export const IdentifierCategory = z.enum([
  'names',
  'geography',
  'dates',
  'phone',
  'fax',
  'email',
  'ssn',
  'nhs-number',
  'national-insurance-number',
  'medical-record-number',
  'health-plan-number',
  'account-number',
  'certificate-or-licence-number',
  'vehicle-identifier',
  'device-identifier',
  'url',
  'ip-address',
  'biometric',
  'face-image',
  'unique-code',
  'age-over-89',
]);

export const FindingRule = z.enum([
  'column-name',
  'ssn-pattern',
  'nhs-number-pattern',
  'ni-number-pattern',
  'phone-pattern',
  'email-pattern',
  'ip-address-pattern',
  'url-pattern',
  'date-pattern',
  'postal-code-pattern',
  'age-over-89',
  'near-unique',
  'too-many-levels',
]);

/** One identifier-screen finding: column, rule and counts, never a value. */
export const Finding = z.object({
  column: z.string(),
  columnIndex: z.number().int().nonnegative(),
  rule: FindingRule,
  category: IdentifierCategory,
  matchedCount: z.number().int().nonnegative().nullable(),
  examinedCount: z.number().int().nonnegative().nullable(),
  message: z.string(),
  /** The privacy regime whose rules applied (absent on versions screened before regimes were a setting). */
  regime: z.enum(PRIVACY_REGIMES).optional(),
});
export type FindingJson = z.infer<typeof Finding>;

/** A level of a categorical or binary column with its row count. */
export const LevelCount = z.object({ value: z.string(), count: z.number().int().nonnegative() });
export type LevelCount = z.infer<typeof LevelCount>;

/** Summary statistics of a numeric column. Quartiles follow R's default, quantile(type = 7). */
export const NumericSummary = z.object({
  min: z.number(),
  max: z.number(),
  mean: z.number(),
  /** Sample standard deviation (n - 1 denominator); null with fewer than two values. */
  sd: z.number().nullable(),
  q1: z.number(),
  median: z.number(),
  q3: z.number(),
  quantileDefinition: z.literal('hyndman-fan-7'),
  integerValued: z.boolean(),
});
export type NumericSummary = z.infer<typeof NumericSummary>;

/** The profile of one column as the upload review page shows it. */
export const ColumnProfile = z.object({
  name: z.string(),
  index: z.number().int().nonnegative(),
  inferredType: ColumnType,
  /** How the values are stored: numbers, or text levels. */
  storage: z.enum(['numeric', 'text']),
  rowCount: z.number().int().nonnegative(),
  missingCount: z.number().int().nonnegative(),
  distinctCount: z.number().int().nonnegative(),
  /** True when the column had more distinct values than the level cap: distinctCount is then a lower bound. */
  distinctIsLowerBound: z.boolean(),
  /** Levels with counts for text columns and for numeric columns with few distinct values; null otherwise. */
  levels: z.array(LevelCount).nullable(),
  /** True when `levels` lists only the most frequent levels. */
  levelsTruncated: z.boolean(),
  numeric: NumericSummary.nullable(),
  /** Non-missing values that were numbers and text, for mixed columns. */
  numericValueCount: z.number().int().nonnegative(),
  textValueCount: z.number().int().nonnegative(),
  /** (Versions stored before the shared tokens lack the next two.) How often each missing-value token (empty, NA, N/A, NULL, ".", "-", NaN in any case) occurred; only tokens met. */
  missingTokens: z.array(z.object({ token: z.string(), count: z.number().int().nonnegative() })).optional(),
  /** Levels that look like undeclared missing-value codes ("unknown", 999 ...); declare them at confirmation. */
  suspectMissing: z.array(z.string()).optional(),
  notes: z.array(z.string()),
});
export type ColumnProfile = z.infer<typeof ColumnProfile>;

/** One entry of a version's data dictionary, as confirmed by the analyst. */
export const DictionaryEntry = z.object({
  name: z.string().min(1),
  type: AnalysableColumnType,
  description: z.string().max(2000).default(''),
  /**
   * Further values the analyst declares missing for this column (such as 999 or "unknown"),
   * besides the shared tokens; compared ignoring surrounding spaces and letter case.
   */
  missingValues: z
    .array(z.string().trim().min(1, 'A missing-value code cannot be empty.').max(100, 'Keep a missing-value code under 100 characters.'))
    .max(20, 'Declare at most 20 missing-value codes per column.')
    .optional(),
  /** Unit of a numeric column (such as "bed-days" for person-time), shown with rates per 1,000 units. */
  unit: z.string().trim().max(40, 'Keep a unit under 40 characters.').optional(),
  /**
   * A categorical column whose levels are ordered: a score for every level (such as
   * low 1, mid 2, high 3). Analyses with it as the modifier add a test for trend, and
   * carry these scores in their specification.
   */
  ordered: z.object({ scores: z.record(z.string().min(1), z.number().finite()) }).optional(),
});
export type DictionaryEntry = z.infer<typeof DictionaryEntry>;

/** Body of POST /api/extracts/{extractId}/versions/{versionId}/confirm. */
export const ConfirmVersionBody = z.object({
  attestation: z.object({ signedName: z.string().trim().min(1).max(200) }),
  /** Omitted: the inferred types are accepted. */
  columns: z.array(DictionaryEntry).optional(),
});
export type ConfirmVersionBody = z.infer<typeof ConfirmVersionBody>;

/** Processing stages the server reports while a version is being read. */
export const ProcessingStage = z.enum(['receiving', 'reading', 'screening', 'profiling', 'storing']);
export type ProcessingStage = z.infer<typeof ProcessingStage>;

/** Status of one version, as GET /api/extracts/{extractId} returns it. */
export const VersionStatus = z.discriminatedUnion('status', [
  z.object({ status: z.literal('processing'), stage: ProcessingStage, percent: z.number().min(0).max(100) }),
  z.object({ status: z.literal('needs-review'), findings: z.array(Finding), profile: z.array(ColumnProfile) }),
  z.object({ status: z.literal('ready'), profile: z.array(ColumnProfile), dictionary: z.array(DictionaryEntry) }),
  z.object({ status: z.literal('refused'), reasons: z.array(RefusalReason), findings: z.array(Finding) }),
]);
export type VersionStatus = z.infer<typeof VersionStatus>;

/** Query of POST /api/initiatives/{initiativeId}/extracts. */
/** Columns to leave out while reading (their values are never stored), comma-separated. */
const DropColumns = z
  .string()
  .max(4000)
  .optional()
  .transform((value) => (value ? value.split(',').map((name) => name.trim()).filter(Boolean) : []));

/** Columns flagged by their name alone to keep (repeat `keep=` per column); values are never split. */
const KeepColumns = z
  .union([z.string(), z.array(z.string())])
  .describe('A column flagged by its name alone to keep; repeat the parameter per column. Needs keepReason.')
  .optional()
  .transform((value) => (value === undefined ? [] : Array.isArray(value) ? value : [value]).map((name) => name.trim()).filter(Boolean))
  .pipe(z.array(z.string().max(200, 'Keep a column name under 200 characters.')).max(50, 'Keep at most 50 columns.'));

/** Why the kept columns are not identifiers: required with `keep`. */
const KeepReason = z
  .string()
  .trim()
  .max(1000, 'Keep the reason under 1,000 characters.')
  .describe('Why the kept columns are not identifiers; stored with the version and audited.')
  .optional();

/** The keep request of an upload: each kept column needs a stated reason. */
export const KeepRequest = z
  .object({ keep: KeepColumns, keepReason: KeepReason })
  .superRefine((value, ctx) => {
    if (value.keep.length > 0 && !value.keepReason) {
      ctx.addIssue({ code: 'custom', path: ['keepReason'], message: 'Say why the kept column is not an identifier (the parameter "keepReason").' });
    }
    if (value.keep.length === 0 && value.keepReason) {
      ctx.addIssue({ code: 'custom', path: ['keep'], message: 'Name the column to keep (the parameter "keep") along with the reason.' });
    }
  });
export type KeepRequest = z.infer<typeof KeepRequest>;

export const NewExtractQuery = z.object({
  name: z.string().trim().min(1, 'Give the extract a name (the query parameter "name").').max(120, 'Keep the name under 120 characters.'),
  drop: DropColumns,
  keep: KeepColumns,
  keepReason: KeepReason,
});

/** Query of POST /api/extracts/{extractId}/versions. */
export const NewVersionQuery = z.object({ drop: DropColumns, keep: KeepColumns, keepReason: KeepReason });
export type NewExtractQuery = z.infer<typeof NewExtractQuery>;

/** A column flagged by its name alone that the uploader kept, as stored with the version. */
export const KeptColumn = z.object({
  column: z.string(),
  rule: FindingRule,
  category: IdentifierCategory,
  /** The screen's message about the name. */
  message: z.string(),
  reason: z.string(),
  keptBy: z.object({ id: z.uuid(), name: z.string() }),
  keptAt: z.string(),
}).meta({ id: 'KeptColumn' });
export type KeptColumn = z.infer<typeof KeptColumn>;

/** Query of the row preview. */
export const RowsQuery = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
  sort: z.string().min(1).max(200).optional(),
  direction: z.enum(['asc', 'desc']).default('asc'),
});
export type RowsQuery = z.infer<typeof RowsQuery>;

export const ArchiveBody = z.object({ archived: z.boolean() }).meta({ id: 'ArchiveExtractBody' });
export type ArchiveBody = z.infer<typeof ArchiveBody>;

export const UploadAccepted = z.object({ extractId: z.uuid(), versionId: z.uuid() }).meta({ id: 'UploadAccepted' });
