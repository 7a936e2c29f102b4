/**
 * Groups of pigs in sites.yaml: each barn's list is checked so that a day belongs to at most one
 * group, and every problem names the file and the key path.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { configCases, configError } from './configCases.js';

const { configEdited } = configCases();

/** The demo's sites.yaml with `groups` set on the first barn of the first site. */
const withGroups = (groups: unknown) => configEdited('sites.yaml', (doc) => (doc.sites[0].barns[0].groups = groups));

describe('barn groups in sites.yaml', () => {
  it('loads groups in placement order with the id as label when none is given', () => {
    const config = loadConfig(
      withGroups([
        { id: 'G2', placedOn: '2026-05-04' },
        { id: 'G1', label: 'Spring batch', placedOn: '2026-01-05', closedOn: '2026-04-20' },
      ]),
    );
    const barn = config.sites[0]!.barns[0]!;
    expect(barn.groups).toEqual([
      { id: 'G1', label: 'Spring batch', placedOn: '2026-01-05', closedOn: '2026-04-20' },
      { id: 'G2', label: 'G2', placedOn: '2026-05-04', closedOn: null },
    ]);
  });

  it('refuses a close-out before the placement, at the key path of closedOn', () => {
    const error = configError(withGroups([{ id: 'G1', placedOn: '2026-03-10', closedOn: '2026-03-01' }]));
    expect(error.problems).toContainEqual(
      expect.objectContaining({
        keyPath: 'sites[0].barns[0].groups[0].closedOn',
        detail: expect.stringContaining("before the group's placement"),
      }),
    );
  });

  it('refuses overlapping groups at the later placement, and a same-day close-out and placement', () => {
    const overlap = configError(
      withGroups([
        { id: 'G1', placedOn: '2026-01-05', closedOn: '2026-04-20' },
        { id: 'G2', placedOn: '2026-04-01', closedOn: '2026-08-01' },
      ]),
    );
    expect(overlap.problems).toContainEqual(
      expect.objectContaining({
        keyPath: 'sites[0].barns[0].groups[1].placedOn',
        detail: expect.stringContaining('overlaps group G1'),
      }),
    );
    // One day cannot belong to two groups: placement on the close-out day is an overlap too.
    const sameDay = configError(
      withGroups([
        { id: 'G1', placedOn: '2026-01-05', closedOn: '2026-04-20' },
        { id: 'G2', placedOn: '2026-04-20' },
      ]),
    );
    expect(sameDay.problems.map((problem) => problem.keyPath)).toContain('sites[0].barns[0].groups[1].placedOn');
  });

  it('refuses an open group followed by another, and a repeated group id', () => {
    const open = configError(
      withGroups([
        { id: 'G1', placedOn: '2026-01-05' },
        { id: 'G2', placedOn: '2026-05-04' },
      ]),
    );
    expect(open.problems).toContainEqual(
      expect.objectContaining({
        keyPath: 'sites[0].barns[0].groups[0].closedOn',
        detail: expect.stringContaining('is missing'),
      }),
    );
    const twice = configError(
      withGroups([
        { id: 'G1', placedOn: '2026-01-05', closedOn: '2026-02-01' },
        { id: 'g1', placedOn: '2026-03-05' },
      ]),
    );
    expect(twice.problems).toContainEqual(expect.objectContaining({ keyPath: 'sites[0].barns[0].groups[1].id' }));
  });

  it('refuses a date that is not yyyy-MM-dd or not a calendar day (2026 is no leap year; Gregorian calendar)', () => {
    const written = configError(withGroups([{ id: 'G1', placedOn: '5.1.2026' }]));
    expect(written.problems).toContainEqual(
      expect.objectContaining({
        keyPath: 'sites[0].barns[0].groups[0].placedOn',
        detail: expect.stringContaining('yyyy-MM-dd'),
      }),
    );
    const noDay = configError(withGroups([{ id: 'G1', placedOn: '2026-02-29' }]));
    expect(noDay.problems).toContainEqual(
      expect.objectContaining({
        keyPath: 'sites[0].barns[0].groups[0].placedOn',
        detail: expect.stringContaining('not a day of the calendar'),
      }),
    );
    // 2028 is a leap year (divisible by 4, not a century): 29 February loads.
    expect(() => loadConfig(withGroups([{ id: 'G1', placedOn: '2028-02-29' }]))).not.toThrow();
  });

  it('refuses an unknown key in a group, at its key path', () => {
    const error = configError(withGroups([{ id: 'G1', placedOn: '2026-01-05', emptiedOn: '2026-02-01' }]));
    expect(error.problems.some((problem) => problem.keyPath.startsWith('sites[0].barns[0].groups[0]'))).toBe(true);
  });
});
