import { z } from 'zod';

/** `?page=1&pageSize=20` on library lists. */
export const pageQuery = z.object({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(20),
});

export interface Paged<T> {
  items: T[];
  total: number;
  page: number;
  pageSize: number;
}

export function offsetOf(q: { page: number; pageSize: number }): number {
  return (q.page - 1) * q.pageSize;
}
