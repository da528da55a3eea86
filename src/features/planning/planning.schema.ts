/**
 * The initiative's plan before the data: the sample-size calculator's inputs (as the
 * engine's planning module takes them), the saved plan, and the register of prespecified
 * modifiers. Request bodies and the shapes the API answers with.
 */
import { z } from 'zod';

const fraction = (what: string) => z.number({ message: `Give ${what} as a number.` }).gt(0, `${what} must be above 0.`).lt(1, `${what} must be below 1.`);
const positive = (what: string) => z.number({ message: `Give ${what} as a number.` }).positive(`${what} must be above 0.`);

export const PLAN_MEASURES = ['ratio-of-ratios', 'reri', 'risk-difference-difference', 'mean-difference-difference'] as const;
export const PLAN_MEASURE_LABEL: Record<(typeof PLAN_MEASURES)[number], string> = {
  'ratio-of-ratios': 'Ratio of risk ratios',
  reri: 'RERI (relative excess risk due to interaction)',
  'risk-difference-difference': 'Difference in risk differences',
  'mean-difference-difference': 'Difference in mean differences',
};

export const PlanInputs = z
  .object({
    outcome: z.discriminatedUnion('type', [
      z.object({
        type: z.literal('binary'),
        baselineRisk: fraction('The baseline risk'),
        modifierRiskRatio: positive('The modifier\'s risk ratio').default(1),
      }),
      z.object({ type: z.literal('continuous'), mean: z.number({ message: 'Give the mean as a number.' }), sd: positive('The standard deviation') }),
    ]),
    mainEffect: z.object({
      measure: z.enum(['risk-ratio', 'risk-difference', 'mean-difference'], { message: 'Choose a risk ratio, a risk difference or a mean difference.' }),
      value: z.number({ message: 'Give the expected main effect as a number.' }),
    }),
    interaction: z.object({
      measure: z.enum(PLAN_MEASURES, { message: 'Choose the scale of the interaction.' }),
      value: z.number({ message: 'Give the interaction worth detecting as a number.' }),
    }),
    allocation: fraction('The share in the intervention arm').default(0.5),
    modifierPrevalence: fraction('The modifier\'s prevalence'),
    alpha: z.number().gt(0, 'Alpha must be above 0.').lt(0.5, 'Alpha must be below 0.5.').default(0.05),
  })
  .meta({ id: 'PlanInputs' });
export type PlanInputs = z.infer<typeof PlanInputs>;

/** A calculation: the inputs, and optionally a number of rows to give the power at and a simulation to run. */
export const PlanCheckBody = z
  .object({
    inputs: PlanInputs,
    rows: z.number().int().min(8, 'Give at least 8 rows.').max(10_000_000, 'Give at most 10,000,000 rows.').optional(),
    simulate: z.boolean().default(false),
  })
  .meta({ id: 'PlanCheckRequest' });

export const SavePlanBody = z
  .object({
    inputs: PlanInputs,
    /** The number of rows the initiative expects to have. */
    plannedRows: z.number().int().min(8, 'Give at least 8 rows.').max(10_000_000, 'Give at most 10,000,000 rows.'),
    note: z.string().trim().max(2000, 'Keep the note under 2,000 characters.').default(''),
  })
  .meta({ id: 'SavePlanRequest' });
export type SavePlanBody = z.infer<typeof SavePlanBody>;

export const PlanFiguresView = z
  .object({
    /** Closed form (normal approximation, saturated arm × modifier design). */
    closedForm: z.object({
      cellOutcomes: z.array(z.number()).length(4),
      cellFractions: z.array(z.number()).length(4),
      testedSize: z.number(),
      unitVariance: z.number(),
      rowsFor80: z.number().int(),
      rowsFor90: z.number().int(),
      relativeToMainEffect: z.number(),
      powerAtRows: z.number().nullable(),
    }),
    /** The engine's seeded simulation at the same rows, when asked for. */
    simulation: z
      .object({ rows: z.number().int(), replicates: z.number().int(), seed: z.number().int(), power: z.number(), monteCarloError: z.number(), untestable: z.number().int() })
      .nullable(),
  })
  .meta({ id: 'PlanFigures' });
export type PlanFiguresView = z.infer<typeof PlanFiguresView>;

export const SavedPlanView = z
  .object({
    id: z.uuid(),
    inputs: PlanInputs,
    plannedRows: z.number().int(),
    figures: PlanFiguresView,
    note: z.string(),
    savedBy: z.object({ id: z.uuid(), name: z.string() }),
    savedAt: z.string(),
  })
  .meta({ id: 'SavedPlan' });
export type SavedPlanView = z.infer<typeof SavedPlanView>;

export const DIRECTIONS = ['stronger', 'weaker', 'reversed', 'none'] as const;
export type Direction = (typeof DIRECTIONS)[number];
export const DIRECTION_LABEL: Record<Direction, string> = {
  stronger: 'Stronger effect',
  weaker: 'Weaker effect',
  reversed: 'Effect in the opposite direction',
  none: 'No direction predicted',
};

export const RegisterBody = z
  .object({
    modifierColumn: z.string().trim().min(1, 'Name the modifier column.').max(200, 'Keep the column name under 200 characters.'),
    outcomeColumn: z.string().trim().max(200, 'Keep the column name under 200 characters.').default(''),
    direction: z.enum(DIRECTIONS, { message: 'Choose the predicted direction, or "no direction predicted".' }),
    /** Where the effect is predicted to differ: a level ("75 and over") or "higher values". */
    where: z.string().trim().max(200, 'Keep this under 200 characters.').default(''),
    rationale: z.string().trim().min(1, 'Give the clinical or biological reason for the prediction.').max(2000, 'Keep the rationale under 2,000 characters.'),
  })
  .refine((body) => body.direction === 'none' || body.where.length > 0, { message: 'Say where the effect is predicted to be stronger, weaker or reversed.', path: ['where'] })
  .meta({ id: 'RegisterModifierRequest' });
export type RegisterBody = z.infer<typeof RegisterBody>;

export const WithdrawBody = z
  .object({ reason: z.string().trim().min(1, 'Say why the entry is withdrawn.').max(2000, 'Keep the reason under 2,000 characters.') })
  .meta({ id: 'WithdrawModifierRequest' });

export const RegisterEntryView = z
  .object({
    id: z.uuid(),
    modifierColumn: z.string(),
    outcomeColumn: z.string(),
    direction: z.enum(DIRECTIONS),
    where: z.string(),
    rationale: z.string(),
    registeredBy: z.object({ id: z.uuid(), name: z.string() }),
    registeredAt: z.string(),
    withdrawn: z.object({ at: z.string(), by: z.string(), reason: z.string() }).nullable(),
  })
  .meta({ id: 'RegisterEntry' });
export type RegisterEntryView = z.infer<typeof RegisterEntryView>;

/** How an analysis stands against the register and the plan, shown with its runs. */
export const PlanStandingView = z
  .object({
    /** planned: the modifier was registered (and not withdrawn) before the extract version was uploaded. */
    status: z.enum(['planned', 'exploratory']),
    entry: RegisterEntryView.nullable(),
    /** Why it is exploratory, in words (no entry, registered after the data, withdrawn). */
    reason: z.string(),
    plan: z
      .object({ plannedRows: z.number().int(), rowsFor80: z.number().int(), actualRows: z.number().int().nullable(), powerAtActual: z.number().nullable(), powered: z.boolean().nullable(), measure: z.enum(PLAN_MEASURES), size: z.number() })
      .nullable(),
  })
  .meta({ id: 'PlanStanding' });
export type PlanStandingView = z.infer<typeof PlanStandingView>;
