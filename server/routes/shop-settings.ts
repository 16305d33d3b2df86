import { Router } from 'express';
import { shopSettingsSchema } from '../../shared/billing';
import type { Db } from '../db/client';
import { currentUser, requireRole } from '../middleware/auth';
import { parse } from '../middleware/validate';
import { getShopSettings, updateShopSettings } from '../services/shop-settings';
import type { SignedInCache } from '../services/signed-in-cache';

/** Rates, tax, currency and the shop's details: the owner's alone. */
export function shopSettingsRoutes(db: Db, signedIn: SignedInCache): Router {
  const r = Router();
  const owner = requireRole('owner');
  r.get('/settings/shop', owner, async (req, res) => {
    res.json(await getShopSettings(db, currentUser(req).shop.id));
  });
  r.put('/settings/shop', owner, async (req, res) => {
    const me = currentUser(req);
    const saved = await updateShopSettings(db, me.shop.id, me.id, parse(shopSettingsSchema, req.body));
    // The shop's name travels with every signed-in user.
    signedIn.clear();
    res.json(saved);
  });
  return r;
}
