import { describe, expect, it } from 'vitest';
import { JOB_STATUSES, type JobStatus } from '../../shared/jobs';
import { ROLES } from '../../shared/roles';
import { JOB_MOVES, STAGE_MOVERS, checkMove, movesFor } from '../../shared/job-transitions';

// The stage table is product policy, not a standard: these tests pin the rules in the brief
// (forward moves, sensible moves back, who moves what) and the table's shape (no dead ends).

describe('the stage map', () => {
  it('allows every step forward in stage order', () => {
    for (let i = 0; i + 1 < JOB_STATUSES.length; i++) {
      expect(JOB_MOVES[JOB_STATUSES[i]!], `${JOB_STATUSES[i]} → ${JOB_STATUSES[i + 1]}`).toContain(JOB_STATUSES[i + 1]);
    }
  });

  it('has no move to the same stage and only known stages', () => {
    for (const from of JOB_STATUSES) {
      expect(JOB_MOVES[from]).not.toContain(from);
      for (const to of JOB_MOVES[from]) expect(JOB_STATUSES).toContain(to);
    }
  });

  it('has no dead ends: from every stage, collected can be reached; collected is final', () => {
    const reach = (from: JobStatus) => {
      const seen = new Set<JobStatus>([from]);
      const queue = [from];
      while (queue.length) {
        for (const to of JOB_MOVES[queue.shift()!]) {
          if (!seen.has(to)) {
            seen.add(to);
            queue.push(to);
          }
        }
      }
      return seen;
    };
    for (const s of JOB_STATUSES) expect(reach(s).has('collected'), s).toBe(true);
    expect(JOB_MOVES.collected).toEqual([]);
    expect(reach('booked_in').size).toBe(JOB_STATUSES.length);
  });

  it('lets a repair go back to diagnosis and a failed soak test back to repair', () => {
    expect(JOB_MOVES.repair).toContain('diagnosis');
    expect(JOB_MOVES.soak_test).toContain('repair');
  });

  it('refuses skipping the bench: booked in straight to repair, ready or collected', () => {
    for (const to of ['repair', 'ready', 'collected'] as const) expect(JOB_MOVES.booked_in).not.toContain(to);
  });
});

describe('who moves what', () => {
  const into = (role: (typeof ROLES)[number]) => JOB_STATUSES.filter((s) => STAGE_MOVERS[s].includes(role));

  it('technicians the bench stages, diagnosis to ready', () => {
    expect(into('technician')).toEqual(['diagnosis', 'awaiting_approval', 'awaiting_parts', 'repair', 'soak_test', 'ready']);
  });
  it('the desk booked in, waiting for approval, ready, collected', () => {
    expect(into('front_desk')).toEqual(['booked_in', 'awaiting_approval', 'ready', 'collected']);
  });
  it('the owner everything, a customer nothing', () => {
    expect(into('owner')).toEqual([...JOB_STATUSES]);
    expect(into('customer')).toEqual([]);
  });
});

describe('checkMove', () => {
  it.each([
    ['technician', 'booked_in', 'diagnosis'],
    ['technician', 'repair', 'diagnosis'],
    ['front_desk', 'ready', 'collected'],
    ['owner', 'soak_test', 'ready'],
  ] as const)('%s: %s → %s allowed', (role, from, to) => {
    expect(checkMove(role, from, to)).toEqual({ ok: true });
  });

  it('names the reason and the stages in its message', () => {
    expect(checkMove('technician', 'booked_in', 'repair')).toEqual({
      ok: false,
      reason: 'not_a_move',
      message: 'A job cannot go from “Booked in” to “Repair”',
    });
    expect(checkMove('front_desk', 'booked_in', 'diagnosis')).toMatchObject({ ok: false, reason: 'role', message: 'Front desk cannot move a job to “Diagnosis”' });
    expect(checkMove('technician', 'ready', 'collected')).toMatchObject({ ok: false, reason: 'role' });
    expect(checkMove('owner', 'repair', 'repair')).toMatchObject({ ok: false, reason: 'same' });
    expect(checkMove('owner', 'collected', 'diagnosis')).toMatchObject({ ok: false, reason: 'not_a_move' });
  });

  it('agrees with movesFor for every role and pair of stages', () => {
    for (const role of ROLES) {
      for (const from of JOB_STATUSES) {
        const offered = movesFor(role, from);
        for (const to of JOB_STATUSES) expect(checkMove(role, from, to).ok, `${role} ${from}→${to}`).toBe(offered.includes(to));
      }
    }
  });

  it('offers moves in stage order', () => {
    expect(movesFor('technician', 'ready')).toEqual(['repair', 'soak_test']);
    expect(movesFor('owner', 'diagnosis')).toEqual(['booked_in', 'awaiting_approval', 'awaiting_parts', 'repair', 'ready']);
    expect(movesFor('front_desk', 'booked_in')).toEqual([]);
  });
});
