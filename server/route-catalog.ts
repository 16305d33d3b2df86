import type { Express } from 'express';
import type { Role } from '../shared/roles';

export interface RouteInfo {
  method: string;
  path: string;
  /** Roles let through by the route's role gate; null = no gate (a public route). */
  roles: readonly Role[] | null;
}

interface LayerLike {
  rawPath?: string | string[];
  route?: { path: string; methods: Record<string, boolean>; stack: LayerLike[] };
  handle?: { stack?: LayerLike[]; allowedRoles?: readonly Role[] };
}

const joinPath = (a: string, b: string) => `${a}/${b}`.replace(/\/+/g, '/').replace(/(.)\/$/, '$1');

function walk(stack: LayerLike[], prefix: string, inherited: readonly Role[] | null, out: RouteInfo[]) {
  let gate = inherited;
  for (const layer of stack) {
    const raw = typeof layer.rawPath === 'string' ? layer.rawPath : '/';
    if (layer.route) {
      const own = layer.route.stack.map((l) => l.handle?.allowedRoles).find((r) => r !== undefined) ?? gate;
      for (const [method, on] of Object.entries(layer.route.methods)) {
        if (on && method !== '_all') out.push({ method: method.toUpperCase(), path: joinPath(prefix, layer.route.path), roles: own });
      }
    } else if (layer.handle?.stack) {
      walk(layer.handle.stack, joinPath(prefix, raw), gate, out);
    } else if (layer.handle?.allowedRoles) {
      // A gate mounted with router.use() guards every route after it in that router.
      gate = layer.handle.allowedRoles;
    }
  }
}

/** Every API route with the roles its gate allows, read from the app itself so it cannot drift. */
export function listRoutes(app: Express): RouteInfo[] {
  const out: RouteInfo[] = [];
  const stack = (app as unknown as { router: { stack: LayerLike[] } }).router.stack;
  walk(stack, '/', null, out);
  return out.filter((r) => r.path.startsWith('/api/'));
}
