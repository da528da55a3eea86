/** How the engine names the points a continuous modifier's effect is reported at. */

/** "5th", "21st", "42nd", "33rd", "12.5th" */
export function ordinal(value: number): string {
  const whole = Number.isInteger(value) ? value : null;
  if (whole === null) return `${value}th`;
  const tens = whole % 100;
  const suffix = tens >= 11 && tens <= 13 ? 'th' : whole % 10 === 1 ? 'st' : whole % 10 === 2 ? 'nd' : whole % 10 === 3 ? 'rd' : 'th';
  return `${whole}${suffix}`;
}
