import type { Paged, PageQuery } from '../../shared/api/common';

export type { Paged, PageQuery };

export function offsetOf(q: PageQuery): number {
  return (q.page - 1) * q.pageSize;
}

/** The page of `items` asked for by `q`, out of `total`. */
export function paged<T>(items: T[], total: number, q: PageQuery): Paged<T> {
  return { items, total, page: q.page, pageSize: q.pageSize };
}
