import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';

/** 200 when the server answers and the database does; 503 otherwise. */
export function healthRoutes(orm: MikroORM): Router {
  const router = Router();
  router.get('/', async (_request, response) => {
    try {
      await orm.em.getConnection().execute('select 1');
      response.json({ status: 'ok', database: 'ok' });
    } catch {
      response.status(503).json({ status: 'degraded', database: 'unreachable' });
    }
  });
  return router;
}
