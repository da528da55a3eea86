import { readFileSync, readdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { engineDataOfCsv } from '@/features/runs/engineInput.js';
import type { AnalysisSpec, EngineData } from '@/engine/types.js';

export const referenceRoot = fileURLToPath(new URL('..', import.meta.url));

/** An R Wald interval as written by make-fixtures.R (ratios exponentiated; se and p on the link scale). */
export interface RInterval {
  estimate: number;
  lower: number;
  upper: number;
  se: number;
  p: number;
}

export interface RMeasure {
  estimate: number;
  lower: number;
  upper: number;
  se: number;
}

export interface RLimits {
  se: number;
  lower: number;
  upper: number;
}

export interface RAdditive {
  level?: string;
  reri: RMeasure;
  ap: RMeasure;
  apStar: RMeasure;
  s: RMeasure | null;
  reriMover: { lower: number; upper: number };
}

export interface RTest {
  statistic: number;
  df: number;
  df2?: number;
  p: number;
}

/** A fixture written by tests/reference/r/make-fixtures.R. */
export interface Fixture {
  name: string;
  r: string;
  spec: AnalysisSpec;
  levels?: string[];
  coefficients: { term: string[]; estimate: number[]; se: number[] };
  covariance?: number[][];
  logLik: number;
  aic: number;
  deviance: number;
  /** glm()$iter with glm.control(epsilon = 1e-14, maxit = 100). */
  iterations: number;
  /** glm()$iter with R's default glm.control() (epsilon = 1e-8, maxit = 25). */
  iterationsDefault: number;
  /** The same glm() with R's default glm.control() (infert-logistic-continuous). */
  defaultGlm?: { control: string; term: string[]; estimate: number[]; se: number[] };
  residualDf: number;
  omnibus: RTest;
  strata?: RInterval[];
  strataHolm?: number[];
  strataBH?: number[];
  modifierEffects?: (RInterval & { arm: number; level: string })[];
  joint?: (RInterval & { arm: number; level: string })[];
  multiplicative?: (RInterval & { level: string })[] | RInterval;
  additive?: RAdditive[] | RAdditive | null;
  differenceInDifferences?: (RInterval & { level: string })[];
  productSe?: number[];
  mantelHaenszel?: {
    oddsRatio: { estimate: number; lower: number; upper: number };
    riskDifference: { estimate: number; sato: RLimits; greenlandRobins: RLimits };
    chiSquare: RTest;
    woolf: RTest;
    counts: { level: string; a: number; b: number; c: number; d: number }[];
  };
  mean?: number;
  sd?: number;
  observed?: [number, number];
  slopes?: (RInterval & { at: number })[];
  johnsonNeyman?: { leading: number; bounds: number[]; critical: number };
  band?: (RInterval & { index: number; x: number })[];
}

export function fixtureNames(root = referenceRoot): string[] {
  return readdirSync(`${root}/fixtures`).filter((name) => name.endsWith('.json')).map((name) => name.replace(/\.json$/, '')).sort();
}

export function loadFixture(name: string, root = referenceRoot): Fixture {
  return JSON.parse(readFileSync(`${root}/fixtures/${name}.json`, 'utf8')) as Fixture;
}

export function loadDataset(name: string, root = referenceRoot): EngineData {
  return engineDataOfCsv(readFileSync(`${root}/data/${name}.csv`));
}

/** The CSV a fixture's analysis runs on (by dataset name prefix). */
export function datasetOf(fixture: Fixture): string {
  return String(fixture.name).split('-')[0];
}
