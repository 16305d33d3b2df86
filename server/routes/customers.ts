import { Router } from 'express';
import { z } from 'zod';
import { customerInputSchema, unitInputSchema } from '../../shared/customers';
import type { Db } from '../db/client';
import { currentUser, requireRole } from '../middleware/auth';
import { idParam, parse } from '../middleware/validate';
import * as svc from '../services/customers';

const searchQuery = z.object({ q: z.string().max(200).default(''), customerId: z.coerce.number().int().positive().optional() });

/** Customers and their units: the desk and the owner edit, technicians read. */
export function customerRoutes(db: Db): Router {
  const r = Router();
  const read = requireRole('owner', 'front_desk', 'technician');
  const write = requireRole('owner', 'front_desk');

  r.get('/customers', read, async (req, res) => {
    const { q } = parse(searchQuery, req.query);
    res.json(await svc.listCustomers(db, currentUser(req).shop.id, q));
  });
  r.get('/customers/:id', read, async (req, res) => {
    res.json(await svc.getCustomer(db, currentUser(req).shop.id, idParam(req.params.id, 'Customer')));
  });
  r.post('/customers', write, async (req, res) => {
    res.status(201).json(await svc.createCustomer(db, currentUser(req).shop.id, parse(customerInputSchema, req.body)));
  });
  r.put('/customers/:id', write, async (req, res) => {
    const id = idParam(req.params.id, 'Customer');
    res.json(await svc.updateCustomer(db, currentUser(req).shop.id, id, parse(customerInputSchema, req.body)));
  });

  r.get('/units', read, async (req, res) => {
    const { q, customerId } = parse(searchQuery, req.query);
    res.json(await svc.listUnits(db, currentUser(req).shop.id, { search: q, customerId }));
  });
  r.get('/units/:id', read, async (req, res) => {
    res.json(await svc.getUnit(db, currentUser(req).shop.id, idParam(req.params.id, 'Unit')));
  });
  r.post('/units', write, async (req, res) => {
    res.status(201).json(await svc.createUnit(db, currentUser(req).shop.id, parse(unitInputSchema, req.body)));
  });
  r.put('/units/:id', write, async (req, res) => {
    const id = idParam(req.params.id, 'Unit');
    res.json(await svc.updateUnit(db, currentUser(req).shop.id, id, parse(unitInputSchema, req.body)));
  });
  return r;
}
