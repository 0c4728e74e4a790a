import { HttpErrorResponse } from '@angular/common/http';
import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatExpansionModule } from '@angular/material/expansion';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { forkJoin } from 'rxjs';

import { describeError } from '../../core/error-message';
import { AdminMailApi } from './admin-mail-api';
import { ScrollRegion } from '../../ui/scroll-region/scroll-region';

/** Site admins, local mode: what the local mail sink received, and the state of the outbox that sends it. */
@Component({
  selector: 'qp-admin-mail-page',
  imports: [ScrollRegion, DatePipe, MatButtonModule, MatExpansionModule, MatIconModule, MatProgressBarModule],
  template: `
    <header class="page-header">
      <h1 class="title">Mail</h1>
      <button matButton type="button" (click)="mail.reload()"><mat-icon>refresh</mat-icon>Refresh</button>
    </header>
    <p class="help">
      In local mode Quiverpoint delivers its e-mails (invitations, recheck requests and verdicts) to a mail sink
      inside the server instead of the internet. This page shows what arrived there.
    </p>
    @if (mail.isLoading()) {
      <mat-progress-bar mode="indeterminate" aria-label="Loading mail" />
    }
    @if (problem(); as message) {
      <p class="form-error" role="alert">{{ message }}</p>
    }
    @if (mail.hasValue()) {
      <section aria-labelledby="received-heading">
        <h2 id="received-heading" class="section-title">Received by the sink ({{ mails().length }})</h2>
        <mat-accordion multi>
          @for (m of mails(); track m.id) {
            <mat-expansion-panel class="mail">
              <mat-expansion-panel-header>
                <mat-panel-title class="mail-subject">{{ m.subject || '(no subject)' }}</mat-panel-title>
                <mat-panel-description>{{ m.to.join(', ') }} · {{ m.receivedAt | date: 'medium' }}</mat-panel-description>
              </mat-expansion-panel-header>
              <p class="mail-head">From {{ m.from }} to {{ m.to.join(', ') }}</p>
              <pre class="mail-body">{{ m.text }}</pre>
            </mat-expansion-panel>
          } @empty {
            <p class="help">No mail has arrived yet.</p>
          }
        </mat-accordion>
      </section>
      <section aria-labelledby="outbox-heading">
        <h2 id="outbox-heading" class="section-title">Outbox</h2>
        <div class="scroll" qpScrollRegion="Outbox">
          <table class="outbox">
            <thead>
              <tr><th scope="col">To</th><th scope="col">Subject</th><th scope="col">State</th><th scope="col">Attempts</th><th scope="col">Last error</th><th scope="col">Queued</th></tr>
            </thead>
            <tbody>
              @for (o of outbox(); track o.id) {
                <tr [class.failed]="o.state === 'failed'">
                  <td>{{ o.to }}</td>
                  <td>{{ o.subject }}</td>
                  <td class="state">{{ o.state }}@if (o.state === 'pending' && o.nextAttemptAt) { · next {{ o.nextAttemptAt | date: 'mediumTime' }} }</td>
                  <td class="num">{{ o.attempts }}</td>
                  <td>{{ o.lastError ?? '' }}</td>
                  <td class="when">{{ o.createdAt | date: 'short' }}</td>
                </tr>
              } @empty {
                <tr><td colspan="6" class="help">The outbox is empty.</td></tr>
              }
            </tbody>
          </table>
        </div>
      </section>
    }
  `,
  styleUrl: './admin-mail-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AdminMailPage {
  private readonly api = inject(AdminMailApi);

  protected readonly mail = rxResource({
    stream: () => forkJoin({ mails: this.api.listSinkMails(), outbox: this.api.listOutbox() }),
  });
  protected readonly mails = computed(() => (this.mail.hasValue() ? this.mail.value().mails : []));
  protected readonly outbox = computed(() => (this.mail.hasValue() ? this.mail.value().outbox : []));
  protected readonly problem = computed(() => {
    const error = this.mail.error()?.cause ?? this.mail.error();
    if (!error) return null;
    if (error instanceof HttpErrorResponse && error.status === 403) return 'Only a site admin can read the mail sink.';
    return describeError(error);
  });
}
