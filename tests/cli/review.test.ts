// Review aggregation. The median is the usual definition (middle value; mean of the two middle
// values for an even count): common practice, no source.
import { describe, expect, it } from 'vitest';
import { median, reviewGoals } from '../../src/cli/review.js';

describe('median', () => {
  it('is the middle value, or the mean of the two middle values', () => {
    expect(median([])).toBeNull();
    expect(median([7])).toBe(7);
    expect(median([90, 30, 40])).toBe(40);
    expect(median([30, 40, 90, 10])).toBe(35);
  });
});

describe('reviewGoals', () => {
  it('counts applicable as met + missed + pending and keeps no-data and n/a apart', () => {
    const r = reviewGoals(
      [
        [
          { id: 'sep1.antibiotics', status: 'met', minutesFromTimeZero: 30 },
          { id: 'sep1.vasopressor', status: 'not-applicable', minutesFromTimeZero: null },
        ],
        [
          { id: 'sep1.antibiotics', status: 'missed', minutesFromTimeZero: 200 },
          { id: 'sep1.vasopressor', status: 'no-data', minutesFromTimeZero: null },
        ],
        [
          { id: 'sep1.antibiotics', status: 'pending', minutesFromTimeZero: null },
          { id: 'sep1.vasopressor', status: 'met', minutesFromTimeZero: 100 },
        ],
      ],
      '2026-03-01T12:00:00.000Z',
    );
    expect(r.worksheets).toBe(3);
    expect(r.goals).toEqual([
      // A late completion (missed, 200 min) is not part of the median of met goals.
      {
        id: 'sep1.antibiotics',
        worksheets: 3,
        applicable: 3,
        met: 1,
        missed: 1,
        pending: 1,
        noData: 0,
        notApplicable: 0,
        medianMinutesToMet: 30,
      },
      {
        id: 'sep1.vasopressor',
        worksheets: 3,
        applicable: 1,
        met: 1,
        missed: 0,
        pending: 0,
        noData: 1,
        notApplicable: 1,
        medianMinutesToMet: 100,
      },
    ]);
  });
});
