import { JOB_STATUSES, JOB_STATUS_LABELS, type JobStatus } from './jobs';
import { ROLE_LABELS, type Role } from './roles';

/**
 * Where a job may go from each stage. Forward along the bench, plus the moves back a real bench
 * makes: a repair that shows a second fault goes back to diagnosis, a soak test that fails goes
 * back to repair, a declined quote or an unrepairable unit goes straight to ready for return.
 * Collected is the end; a unit that comes back is a new job.
 */
export const JOB_MOVES: Record<JobStatus, readonly JobStatus[]> = {
  booked_in: ['diagnosis'],
  diagnosis: ['awaiting_approval', 'awaiting_parts', 'repair', 'ready', 'booked_in'],
  awaiting_approval: ['awaiting_parts', 'repair', 'ready', 'diagnosis'],
  awaiting_parts: ['repair', 'awaiting_approval', 'diagnosis'],
  repair: ['soak_test', 'awaiting_parts', 'diagnosis'],
  soak_test: ['ready', 'repair', 'diagnosis'],
  ready: ['collected', 'repair', 'soak_test'],
  collected: [],
};

/**
 * Who may move a job into each stage: technicians the bench stages, the desk the counter stages
 * (booking in, asking for approval, ready, collected), the owner all. Customers move nothing.
 */
export const STAGE_MOVERS: Record<JobStatus, readonly Role[]> = {
  booked_in: ['owner', 'front_desk'],
  diagnosis: ['owner', 'technician'],
  awaiting_approval: ['owner', 'technician', 'front_desk'],
  awaiting_parts: ['owner', 'technician'],
  repair: ['owner', 'technician'],
  soak_test: ['owner', 'technician'],
  ready: ['owner', 'technician', 'front_desk'],
  collected: ['owner', 'front_desk'],
};

export type MoveCheck =
  | { ok: true }
  | { ok: false; reason: 'same' | 'not_a_move' | 'role'; message: string };

/** Whether `role` may move a job from `from` to `to`; the message is fit to show the user. */
export function checkMove(role: Role, from: JobStatus, to: JobStatus): MoveCheck {
  if (from === to) return { ok: false, reason: 'same', message: `The job is already at “${JOB_STATUS_LABELS[to]}”` };
  if (!JOB_MOVES[from].includes(to)) {
    return {
      ok: false,
      reason: 'not_a_move',
      message: `A job cannot go from “${JOB_STATUS_LABELS[from]}” to “${JOB_STATUS_LABELS[to]}”`,
    };
  }
  if (!STAGE_MOVERS[to].includes(role)) {
    return {
      ok: false,
      reason: 'role',
      message: `${ROLE_LABELS[role]} cannot move a job to “${JOB_STATUS_LABELS[to]}”`,
    };
  }
  return { ok: true };
}

/** The moves to offer `role` on a job at `from`, in stage order. */
export function movesFor(role: Role, from: JobStatus): JobStatus[] {
  return JOB_STATUSES.filter((to) => JOB_MOVES[from].includes(to) && STAGE_MOVERS[to].includes(role));
}
