/**
 * Case-list pages kept in memory under (lab, library version, query). The version is bumped by PostgreSQL on every
 * change the list shows (migration 0004) and read with the caller's memberships in the authentication query, so a
 * hit needs no query of its own and a stale page is never served: a change moves the version, and the old keys age
 * out of the LRU. Pages are the same for every member of the lab (the list carries no per-user field).
 */
import { LRUCache } from 'lru-cache';
import type { CaseListItem, Paged } from '../../shared/api';

export type CaseListPage = Paged<CaseListItem>;

export class CaseListCache {
  private readonly pages: LRUCache<string, CaseListPage>;

  constructor(maxPages = 500) {
    this.pages = new LRUCache({ max: maxPages });
  }

  /** The page for this lab state and query: from memory, or computed once and kept. */
  async page(labId: string, version: number | undefined, query: object, compute: () => Promise<CaseListPage>): Promise<CaseListPage> {
    if (version === undefined) return compute();
    const key = `${labId}|${version}|${JSON.stringify(query)}`;
    const hit = this.pages.get(key);
    if (hit) return hit;
    const page = await compute();
    this.pages.set(key, page);
    return page;
  }

  get size(): number {
    return this.pages.size;
  }
}
