import type { JohnsonNeymanResult } from '../types.js';

export interface ConditionalEffectModel {
  /** b1, the exposure coefficient (effect at design value u = 0). */
  readonly b1: number;
  /** b3, the exposure × modifier coefficient. */
  readonly b3: number;
  readonly v11: number;
  readonly v13: number;
  readonly v33: number;
}

/**
 * Johnson-Neyman boundaries of a conditional effect b1 + b3·u (Bauer and Curran,
 * Multivariate Behav Res 2005;40:373-400): the values of the modifier where the effect's
 * Wald statistic equals the critical value t.
 *
 * Formula: (b3² − t²V33)u² + 2(b1b3 − t²V13)u + (b1² − t²V11) = 0. If the leading
 * coefficient is positive the effect is significant outside the roots; if negative,
 * between them; with no real roots it is significant everywhere (leading coefficient
 * positive) or nowhere (negative). `shift` converts the design scale u back to the
 * modifier's own scale (x = u + shift, the centring constant). `observed` is the observed
 * range of x, and boundsInRange says which boundaries lie inside it.
 *
 * @example b1 = 0.2, b3 = 0.1, V = diag(0.01, ·, 0.0004), t = 1.96 → bounds on u where
 *   (0.01 − 0.0015)u² + 0.04u + (0.04 − 0.0384) = 0.
 */
export function johnsonNeyman(
  model: ConditionalEffectModel,
  critical: number,
  observed: [number, number],
  shift = 0,
): JohnsonNeymanResult {
  const t2 = critical * critical;
  const a = model.b3 * model.b3 - t2 * model.v33;
  const b = 2 * (model.b1 * model.b3 - t2 * model.v13);
  const c = model.b1 * model.b1 - t2 * model.v11;
  const inRange = (x: number) => x >= observed[0] && x <= observed[1];
  if (a === 0) {
    // Degenerate: linear in u, one boundary.
    if (b === 0) return { bounds: null, significant: c > 0 ? 'everywhere' : 'nowhere', observed, boundsInRange: [], criticalValue: critical };
    const root = -c / b + shift;
    return { bounds: [root], significant: b > 0 ? 'outside' : 'inside', observed, boundsInRange: [inRange(root)], criticalValue: critical };
  }
  const discriminant = b * b - 4 * a * c;
  if (discriminant < 0) {
    return { bounds: null, significant: a > 0 ? 'everywhere' : 'nowhere', observed, boundsInRange: [], criticalValue: critical };
  }
  const root = Math.sqrt(discriminant);
  // Numerically stable pair of roots.
  const qValue = -0.5 * (b + Math.sign(b || 1) * root);
  const first = qValue / a;
  const second = qValue !== 0 ? c / qValue : -first;
  const lower = Math.min(first, second) + shift;
  const upper = Math.max(first, second) + shift;
  return {
    bounds: [lower, upper],
    significant: a > 0 ? 'outside' : 'inside',
    observed,
    boundsInRange: [inRange(lower), inRange(upper)],
    criticalValue: critical,
  };
}
