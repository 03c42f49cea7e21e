import { z } from 'zod';

export interface Page<T> {
  items: T[];
  total: number;
  page: number;
  size: number;
}

/** Page numbers start at 0, as MatPaginator counts them. */
export const pageQuerySchema = z.object({
  page: z.coerce.number().int().min(0).default(0),
  size: z.coerce.number().int().min(1).max(100).default(20),
});
