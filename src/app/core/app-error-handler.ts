import { ErrorHandler, Injectable, Injector, inject } from '@angular/core';
import { MatSnackBar } from '@angular/material/snack-bar';

import { describeError } from './error-message';

/** The one place unhandled errors reach the user: a snack bar in plain words, details in the console. */
@Injectable()
export class AppErrorHandler implements ErrorHandler {
  private readonly injector = inject(Injector);

  handleError(error: unknown): void {
    console.error(error);
    // Looked up late: the handler is created before the overlay machinery is ready.
    this.injector.get(MatSnackBar).open(describeError(error), 'Dismiss', {
      duration: 8000,
      panelClass: 'qp-error-snack',
      politeness: 'assertive',
    });
  }
}
