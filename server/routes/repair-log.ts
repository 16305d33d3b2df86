import { Router, type Request } from 'express';
import type { z } from 'zod';
import type { Db, DbOrTx } from '../db/client';
import {
  biasInputSchema,
  biasUpdateSchema,
  partInputSchema,
  partUpdateSchema,
  railInputSchema,
  railUpdateSchema,
} from '../../shared/repair-log';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import { bias, parts, rails } from '../services/repair-log';

interface LogService<Row, Input, Update> {
  list(db: DbOrTx, shopId: number, jobId: number): Promise<Row[]>;
  create(db: DbOrTx, shopId: number, userId: number, jobId: number, input: Input): Promise<Row>;
  update(db: DbOrTx, shopId: number, userId: number, id: number, input: Update): Promise<Row>;
  remove(db: DbOrTx, shopId: number, userId: number, id: number): Promise<void>;
}

/** The repair log: technicians and the owner write, the desk reads (to quote and invoice). */
export function repairLogRoutes(db: Db): Router {
  const r = Router();
  const staff = requireRole('owner', 'technician', 'front_desk');
  const bench = requireRole('owner', 'technician');

  function mount<Row, I extends z.ZodType, U extends z.ZodType>(
    path: string,
    what: string,
    svc: LogService<Row, z.infer<I>, z.infer<U>>,
    input: I,
    update: U,
  ) {
    const me = (req: Request) => currentUser(req);
    r.get(`/jobs/:id/${path}`, staff, async (req, res) => {
      res.json(await svc.list(db, me(req).shop.id, idParam(req.params.id, 'Job')));
    });
    r.post(`/jobs/:id/${path}`, bench, async (req, res) => {
      const jobId = idParam(req.params.id, 'Job');
      res.status(201).json(await svc.create(db, me(req).shop.id, me(req).id, jobId, parse(input, req.body)));
    });
    r.patch(`/${path}/:id`, bench, async (req, res) => {
      const id = idParam(req.params.id, what);
      res.json(await svc.update(db, me(req).shop.id, me(req).id, id, parse(update, req.body)));
    });
    r.delete(`/${path}/:id`, bench, async (req, res) => {
      await svc.remove(db, me(req).shop.id, me(req).id, idParam(req.params.id, what));
      res.status(204).end();
    });
  }

  mount('parts', 'Part', parts, partInputSchema, partUpdateSchema);
  mount('rails', 'Rail check', rails, railInputSchema, railUpdateSchema);
  mount('bias', 'Bias reading', bias, biasInputSchema, biasUpdateSchema);
  return r;
}
