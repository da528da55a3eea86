/**
 * The initiative's plan before the data (issue 16 §3): the sample-size calculator (the
 * engine's closed form, and its seeded simulation on request), saved plans, the register
 * of prespecified modifiers, and how an analysis stands against both. Tables and policies:
 * migration `…create-plans`, `policies/rls/016_plans.sql`.
 */
import { QueryTypes, type Transaction } from 'sequelize';
import { planFigures, PlanError, powerAtRows } from '@/engine/planning/interactionPlan';
import { simulatePlanPower } from '@/engine/planning/planSimulation';
import { recordAudit } from '@/features/audit/audit.server';
import { sequelize } from '@/lib/server/db';
import { StampedCache } from '@/lib/server/initiativeStamp';
import { badRequest, conflict, notFound } from '@/lib/server/errors';
import type { PlanFiguresView, PlanInputs, PlanStandingView, RegisterBody, RegisterEntryView, SavedPlanView, SavePlanBody } from './planning.schema';

export interface Actor {
  id: string;
  clientAddress: string;
}

/** The simulation's fixed seed and size, so the same plan always shows the same figure. */
export const SIMULATION_SEED = 20261202;
export const SIMULATION_REPLICATES = 1000;
/** Above this many rows a simulation would keep the request too long; the closed form stands alone. */
export const SIMULATION_MAX_ROWS = 100_000;

const iso = (value: Date | string) => new Date(value).toISOString();

/** The closed-form figures, the power at `rows` if given, and the simulation if asked for. Bad figures are a 400 in words. */
export function checkPlan(inputs: PlanInputs, rows?: number, simulate = false): PlanFiguresView {
  try {
    const figures = planFigures(inputs);
    const at = rows ?? null;
    let simulation: PlanFiguresView['simulation'] = null;
    if (simulate) {
      const simulatedRows = rows ?? figures.rowsFor80;
      if (simulatedRows > SIMULATION_MAX_ROWS) {
        throw badRequest(`The simulation runs up to ${SIMULATION_MAX_ROWS.toLocaleString('en-GB')} rows; this plan needs ${simulatedRows.toLocaleString('en-GB')}. The closed form stands alone here.`);
      }
      simulation = simulatePlanPower(inputs, simulatedRows, SIMULATION_REPLICATES, SIMULATION_SEED);
    }
    return {
      closedForm: {
        cellOutcomes: [...figures.cellOutcomes],
        cellFractions: [...figures.cellFractions],
        testedSize: figures.testedSize,
        unitVariance: figures.unitVariance,
        rowsFor80: figures.rowsFor80,
        rowsFor90: figures.rowsFor90,
        relativeToMainEffect: figures.relativeToMainEffect,
        powerAtRows: at === null ? null : powerAtRows(figures.testedSize, figures.unitVariance, inputs.alpha, at),
      },
      simulation,
    };
  } catch (error) {
    if (error instanceof PlanError) throw badRequest(error.message);
    throw error;
  }
}

interface PlanRow { id: string; inputs: PlanInputs & { plannedRows?: number }; figures: PlanFiguresView; note: string; saved_by: string; saver: string; saved_at: Date }

/** Saves a new plan (the older ones stay, as history). */
export async function savePlan(transaction: Transaction, actor: Actor, initiativeId: string, body: SavePlanBody): Promise<string> {
  const figures = checkPlan(body.inputs, body.plannedRows);
  const [row] = await sequelize.query<{ id: string }>(
    `INSERT INTO interaction_plans (initiative_id, inputs, figures, note, saved_by)
     VALUES (:initiativeId, :inputs::jsonb, :figures::jsonb, :note, :actor) RETURNING id`,
    {
      replacements: { initiativeId, inputs: JSON.stringify({ ...body.inputs, plannedRows: body.plannedRows }), figures: JSON.stringify(figures), note: body.note, actor: actor.id },
      type: QueryTypes.SELECT, transaction,
    },
  );
  await recordAudit(transaction, {
    action: 'plan.saved', actorId: actor.id, subjectType: 'initiative', subjectId: initiativeId, initiativeId, clientAddress: actor.clientAddress,
    details: { planId: row.id, measure: body.inputs.interaction.measure, size: body.inputs.interaction.value, plannedRows: body.plannedRows, rowsFor80: figures.closedForm.rowsFor80, rowsFor90: figures.closedForm.rowsFor90 },
  });
  return row.id;
}

const planView = (row: PlanRow): SavedPlanView => {
  const { plannedRows, ...inputs } = row.inputs;
  return { id: row.id, inputs, plannedRows: plannedRows ?? 0, figures: row.figures, note: row.note, savedBy: { id: row.saved_by, name: row.saver }, savedAt: iso(row.saved_at) };
};

/** The initiative's saved plans, newest first (the first is the plan in force). */
export async function plansOf(transaction: Transaction, initiativeId: string): Promise<SavedPlanView[]> {
  const rows = await sequelize.query<PlanRow>(
    `SELECT p.id, p.inputs, p.figures, p.note, p.saved_by, u.display_name AS saver, p.saved_at
       FROM interaction_plans p JOIN users u ON u.id = p.saved_by
      WHERE p.initiative_id = :initiativeId ORDER BY p.saved_at DESC, p.id`,
    { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map(planView);
}

interface EntryRow {
  id: string; modifier_column: string; outcome_column: string; direction: RegisterEntryView['direction']; where_text: string; rationale: string;
  registered_by: string; registrar: string; registered_at: Date; withdrawn_at: Date | null; withdrawer: string | null; withdrawal_reason: string | null;
}

const entryView = (row: EntryRow): RegisterEntryView => ({
  id: row.id, modifierColumn: row.modifier_column, outcomeColumn: row.outcome_column, direction: row.direction, where: row.where_text, rationale: row.rationale,
  registeredBy: { id: row.registered_by, name: row.registrar }, registeredAt: iso(row.registered_at),
  withdrawn: row.withdrawn_at ? { at: iso(row.withdrawn_at), by: row.withdrawer ?? '', reason: row.withdrawal_reason ?? '' } : null,
});

/** The register, oldest first. */
export async function registerOf(transaction: Transaction, initiativeId: string): Promise<RegisterEntryView[]> {
  const rows = await sequelize.query<EntryRow>(
    `SELECT e.id, e.modifier_column, e.outcome_column, e.direction, e.where_text, e.rationale, e.registered_by, r.display_name AS registrar,
            e.registered_at, e.withdrawn_at, w.display_name AS withdrawer, e.withdrawal_reason
       FROM prespecified_modifiers e JOIN users r ON r.id = e.registered_by LEFT JOIN users w ON w.id = e.withdrawn_by
      WHERE e.initiative_id = :initiativeId ORDER BY e.registered_at, e.id`,
    { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map(entryView);
}

/** Adds an entry to the register, stamped now. The same live modifier and outcome twice is a 409. */
export async function registerModifier(transaction: Transaction, actor: Actor, initiativeId: string, body: RegisterBody): Promise<string> {
  const [existing] = await sequelize.query<{ id: string }>(
    `SELECT id FROM prespecified_modifiers WHERE initiative_id = :initiativeId AND modifier_column = :modifier AND outcome_column = :outcome AND withdrawn_at IS NULL`,
    { replacements: { initiativeId, modifier: body.modifierColumn, outcome: body.outcomeColumn }, type: QueryTypes.SELECT, transaction },
  );
  if (existing) throw conflict(`“${body.modifierColumn}” is already on the register${body.outcomeColumn ? ` for “${body.outcomeColumn}”` : ''}. Withdraw that entry first to register a different prediction.`);
  const [row] = await sequelize.query<{ id: string }>(
    `INSERT INTO prespecified_modifiers (initiative_id, modifier_column, outcome_column, direction, where_text, rationale, registered_by)
     VALUES (:initiativeId, :modifier, :outcome, :direction, :where, :rationale, :actor) RETURNING id`,
    {
      replacements: { initiativeId, modifier: body.modifierColumn, outcome: body.outcomeColumn, direction: body.direction, where: body.where, rationale: body.rationale, actor: actor.id },
      type: QueryTypes.SELECT, transaction,
    },
  );
  await recordAudit(transaction, {
    action: 'prespecification.registered', actorId: actor.id, subjectType: 'initiative', subjectId: initiativeId, initiativeId, clientAddress: actor.clientAddress,
    details: { entryId: row.id, modifierColumn: body.modifierColumn, outcomeColumn: body.outcomeColumn, direction: body.direction, where: body.where },
  });
  return row.id;
}

/** Withdraws an entry, with the reason; it stays on the register, marked. */
export async function withdrawEntry(transaction: Transaction, actor: Actor, initiativeId: string, entryId: string, reason: string): Promise<void> {
  const [entry] = await sequelize.query<{ id: string; withdrawn_at: Date | null; modifier_column: string }>(
    'SELECT id, withdrawn_at, modifier_column FROM prespecified_modifiers WHERE id = :entryId AND initiative_id = :initiativeId FOR UPDATE',
    { replacements: { entryId, initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  if (!entry) throw notFound('That register entry');
  if (entry.withdrawn_at) throw conflict('That entry was already withdrawn.');
  await sequelize.query(
    'UPDATE prespecified_modifiers SET withdrawn_at = clock_timestamp(), withdrawn_by = :actor, withdrawal_reason = :reason WHERE id = :entryId',
    { replacements: { entryId, actor: actor.id, reason }, transaction },
  );
  await recordAudit(transaction, {
    action: 'prespecification.withdrawn', actorId: actor.id, subjectType: 'initiative', subjectId: initiativeId, initiativeId, clientAddress: actor.clientAddress,
    details: { entryId, modifierColumn: entry.modifier_column, reason },
  });
}

/** What the standing of an analysis needs to know about it. */
export interface AnalysisForStanding {
  initiativeId: string;
  modifierColumn: string;
  outcomeColumn: string;
  /** When the extract version it analyses was uploaded: a prediction must come before the data. */
  dataArrivedAt: Date | string;
}

/**
 * Planned or exploratory, matched against the register: planned when an entry for the
 * modifier (and this outcome, or any outcome) was registered before the data arrived and
 * is not withdrawn. With the plan in force: planned against actual rows, and whether the
 * run has 80 % power for the interaction the plan looks for.
 */
export async function planStanding(transaction: Transaction, analysis: AnalysisForStanding, actualRows: number | null): Promise<PlanStandingView> {
  const entries = (await registerOf(transaction, analysis.initiativeId)).filter(
    (entry) => entry.modifierColumn === analysis.modifierColumn && (entry.outcomeColumn === '' || entry.outcomeColumn === analysis.outcomeColumn),
  );
  const arrived = new Date(analysis.dataArrivedAt).getTime();
  const live = entries.find((entry) => !entry.withdrawn && new Date(entry.registeredAt).getTime() < arrived);
  let reason = '';
  if (!live) {
    if (entries.length === 0) reason = `“${analysis.modifierColumn}” is not on the initiative's register of prespecified modifiers.`;
    else if (entries.every((entry) => entry.withdrawn)) reason = `The register's entry for “${analysis.modifierColumn}” was withdrawn.`;
    else reason = `“${analysis.modifierColumn}” was registered only after the data it is analysed on were uploaded.`;
  }
  const [plan] = await plansOf(transaction, analysis.initiativeId);
  let standing: PlanStandingView['plan'] = null;
  if (plan) {
    const { testedSize, unitVariance } = plan.figures.closedForm;
    const powerAtActual = actualRows === null ? null : powerAtRows(testedSize, unitVariance, plan.inputs.alpha, actualRows);
    standing = {
      plannedRows: plan.plannedRows, rowsFor80: plan.figures.closedForm.rowsFor80, actualRows, powerAtActual,
      powered: powerAtActual === null ? null : powerAtActual >= 0.8, measure: plan.inputs.interaction.measure, size: plan.inputs.interaction.value,
    };
  }
  return { status: live ? 'planned' : 'exploratory', entry: live ?? null, reason, plan: standing };
}

/** Column names found in the initiative's extracts, as suggestions for the register. */
export async function initiativeColumns(transaction: Transaction, initiativeId: string): Promise<string[]> {
  const rows = await sequelize.query<{ name: string }>(
    'SELECT DISTINCT name FROM extract_columns WHERE initiative_id = :initiativeId ORDER BY name LIMIT 500',
    { replacements: { initiativeId }, type: QueryTypes.SELECT, transaction },
  );
  return rows.map((row) => row.name);
}

/** Standings worked out for results pages, under their initiative's counter. */
const standings = new StampedCache<PlanStandingView | null>();

/**
 * A run's standing against the register and the plan in force, or null for a run without a
 * result yet. Given the counter of the run's initiative (initiativeStamp, read in the same
 * transaction before), a standing worked out under the same counter is reused.
 */
export async function runPlanStanding(transaction: Transaction, runId: string, stamp?: string): Promise<PlanStandingView | null> {
  if (stamp !== undefined) return standings.through(runId, stamp, () => workOutRunPlanStanding(transaction, runId));
  return workOutRunPlanStanding(transaction, runId);
}

async function workOutRunPlanStanding(transaction: Transaction, runId: string): Promise<PlanStandingView | null> {
  const [run] = await sequelize.query<{ initiative_id: string; modifier: string | null; outcome: string | null; uploaded_at: Date; n: number | null }>(
    `SELECT r.initiative_id, r.spec #>> '{modifier,column}' AS modifier, r.spec #>> '{outcome,column}' AS outcome, v.uploaded_at, (r.result ->> 'n')::int AS n
       FROM runs r JOIN extract_versions v ON v.id = r.extract_version_id WHERE r.id = :runId`,
    { replacements: { runId }, type: QueryTypes.SELECT, transaction },
  );
  if (!run || !run.modifier || !run.outcome) return null;
  return planStanding(transaction, { initiativeId: run.initiative_id, modifierColumn: run.modifier, outcomeColumn: run.outcome, dataArrivedAt: run.uploaded_at }, run.n);
}
