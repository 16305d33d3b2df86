import { Router } from 'express';
import type { Db } from '../db/client';
import { searchQuerySchema } from '../../shared/search';
import { currentUser, requireSignedIn } from '../middleware/auth';
import { parse } from '../middleware/validate';
import { searchShop } from '../services/search';

/** One search box for every role; the service narrows what a customer may find. */
export function searchRoutes(db: Db): Router {
  const r = Router();
  r.get('/search', requireSignedIn, async (req, res) => {
    res.json(await searchShop(db, currentUser(req), parse(searchQuerySchema, req.query)));
  });
  return r;
}
