import { describe, expect, it } from 'vitest';
import { trendText } from '../../src/features/progress/components/progress-list.tsx';

const attempt = (attemptId: number, grade: number) => ({ attemptId, scenarioTitle: 'A bench', grade, submittedAt: null, timeToDiagnosisMs: null, faultCorrect: null });

describe('the progress trend in words', () => {
  it('says which way the grades moved from the first graded attempt to the latest, and lists the last three', () => {
    expect(trendText([])).toBe('No graded attempts yet.');
    expect(trendText([attempt(1, 71.6)])).toBe('One graded attempt so far: 72 / 100.');
    expect(trendText([attempt(1, 40), attempt(2, 55), attempt(3, 61), attempt(4, 92)])).toBe(
      '4 graded attempts: up 52 points from the first (40) to the latest (92); the last 3: 55, 61, 92.',
    );
    expect(trendText([attempt(1, 80), attempt(2, 65)])).toMatch(/^2 graded attempts: down 15 points/);
    expect(trendText([attempt(1, 80), attempt(2, 80)])).toMatch(/: level from the first/);
  });
});
