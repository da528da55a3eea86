import { describe, expect, it } from 'vitest';
import { plotInput } from './plotInput';
import { profileFigure, stratumForestFigure } from './plotFigures';
import { effectCurveFigure } from './effectCurve';
import { CALL_BACK_SPEC, UP_AND_ABOUT_SPEC, engineResult } from '../testSupport';

describe('the trimmed plot input', () => {
  it('draws exactly the same figures as the full result', async () => {
    for (const result of [await engineResult('call-back', CALL_BACK_SPEC), await engineResult('up-and-about', UP_AND_ABOUT_SPEC)]) {
      const trimmed = plotInput(result);
      expect(stratumForestFigure(trimmed)).toEqual(stratumForestFigure(result));
      expect(profileFigure(trimmed)).toEqual(profileFigure(result));
      expect(effectCurveFigure(trimmed)).toEqual(effectCurveFigure(result));
      expect(JSON.stringify(trimmed).length).toBeLessThan(JSON.stringify(result).length);
    }
  });
});
