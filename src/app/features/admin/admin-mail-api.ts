import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import { outboxMailSchema, sinkMailSchema } from '../../../../shared/api/admin';
import { pagedSchema } from '../../../../shared/api/common';
import { replyOf } from '../../core/api-reply';
import type { OutboxEntry, SinkMail } from '../library/library-types';

/** The newest mails only: the page is a look at recent traffic, not an archive. */
const RECENT = 200;

/** Site admins: what the local mail sink received and the outbox. Replies parsed with the API contract. */
@Injectable({ providedIn: 'root' })
export class AdminMailApi {
  private readonly http = inject(HttpClient);

  listSinkMails(): Observable<SinkMail[]> {
    return this.http
      .get<unknown>('/api/admin/mails', { params: { pageSize: RECENT } })
      .pipe(replyOf(pagedSchema(sinkMailSchema), 'the received mail'), map((page) => page.items));
  }

  listOutbox(): Observable<OutboxEntry[]> {
    return this.http
      .get<unknown>('/api/admin/outbox', { params: { pageSize: RECENT } })
      .pipe(replyOf(pagedSchema(outboxMailSchema), 'the outbox'), map((page) => page.items));
  }
}
