import { Router } from 'express';
import type { Db } from '../db/client';
import {
  jobAssignSchema,
  jobCreateSchema,
  jobFaultFoundSchema,
  jobListQuerySchema,
  jobNoteSchema,
  jobStatusChangeSchema,
  jobUpdateSchema,
} from '../../shared/jobs';
import { currentUser, requireRole, requireSignedIn } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import { getJobDetail, listJobs, listTechnicians } from '../services/jobs';
import { createJob } from '../services/job-intake';
import * as change from '../services/job-changes';

/** Jobs: the desk books in, the bench diagnoses and repairs, a customer reads their own. */
export function jobRoutes(db: Db): Router {
  const r = Router();
  const staff = requireRole('owner', 'technician', 'front_desk');
  const desk = requireRole('owner', 'front_desk');
  const bench = requireRole('owner', 'technician');
  const jobId = (value: unknown) => idParam(value, 'Job');

  r.get('/jobs', requireSignedIn, async (req, res) => {
    res.json(await listJobs(db, currentUser(req), parse(jobListQuerySchema, req.query)));
  });
  r.get('/jobs/:id', requireSignedIn, async (req, res) => {
    res.json(await getJobDetail(db, currentUser(req), jobId(req.params.id)));
  });
  r.post('/jobs', desk, async (req, res) => {
    res.status(201).json(await createJob(db, currentUser(req), parse(jobCreateSchema, req.body)));
  });
  r.patch('/jobs/:id', desk, async (req, res) => {
    const id = jobId(req.params.id);
    res.json(await change.updateIntake(db, currentUser(req), id, parse(jobUpdateSchema, req.body)));
  });
  // Who may move to which stage is decided per move by shared/job-transitions.ts.
  r.post('/jobs/:id/status', staff, async (req, res) => {
    const id = jobId(req.params.id);
    res.json(await change.changeStatus(db, currentUser(req), id, parse(jobStatusChangeSchema, req.body)));
  });
  r.put('/jobs/:id/fault-found', bench, async (req, res) => {
    const id = jobId(req.params.id);
    res.json(await change.setFaultFound(db, currentUser(req), id, parse(jobFaultFoundSchema, req.body).text));
  });
  r.post('/jobs/:id/notes', staff, async (req, res) => {
    const id = jobId(req.params.id);
    res.status(201).json(await change.addNote(db, currentUser(req), id, parse(jobNoteSchema, req.body)));
  });
  r.put('/jobs/:id/technician', desk, async (req, res) => {
    const id = jobId(req.params.id);
    res.json(await change.assignTechnician(db, currentUser(req), id, parse(jobAssignSchema, req.body)));
  });
  r.get('/technicians', staff, async (req, res) => {
    res.json(await listTechnicians(db, currentUser(req).shop.id));
  });
  return r;
}
