import {
  ChangeDetectionStrategy,
  Component,
  ElementRef,
  inject,
  input,
  isDevMode,
  signal,
  viewChild,
} from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCardModule } from '@angular/material/card';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { Router } from '@angular/router';

import { describeError } from '../../core/error-message';
import { safeReturnUrl } from '../../core/return-url';
import { Session } from '../../core/session';

interface DemoAccount {
  readonly email: string;
  readonly password: string;
  readonly role: string;
}

/** The well-known accounts the local demo seed creates; listed only in development builds. */
const DEMO_ACCOUNTS: readonly DemoAccount[] = [
  { email: 'owner@quiverpoint.test', password: 'quiver-owner', role: 'owner' },
  { email: 'analyst@quiverpoint.test', password: 'quiver-analyst', role: 'analyst' },
  { email: 'reviewer@quiverpoint.test', password: 'quiver-reviewer', role: 'reviewer' },
  { email: 'viewer@quiverpoint.test', password: 'quiver-viewer', role: 'viewer' },
];

@Component({
  selector: 'qp-sign-in-page',
  imports: [
    ReactiveFormsModule,
    MatCardModule,
    MatFormFieldModule,
    MatInputModule,
    MatButtonModule,
    MatIconModule,
    MatProgressBarModule,
  ],
  templateUrl: './sign-in-page.html',
  styleUrl: './sign-in-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SignInPage {
  private readonly session = inject(Session);
  private readonly router = inject(Router);

  /** Bound from the `returnUrl` query parameter. */
  readonly returnUrl = input<string>();

  private readonly emailInput = viewChild.required<ElementRef<HTMLInputElement>>('emailInput');
  private readonly passwordInput = viewChild.required<ElementRef<HTMLInputElement>>('passwordInput');

  protected readonly form = inject(NonNullableFormBuilder).group({
    email: ['', [Validators.required, Validators.email]],
    password: ['', Validators.required],
  });
  protected readonly pending = signal(false);
  protected readonly serverError = signal<string | null>(null);
  protected readonly demoAccounts = isDevMode() ? DEMO_ACCOUNTS : [];
  protected readonly passwordVisible = signal(false);

  protected signIn(): void {
    this.serverError.set(null);
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      const first = this.form.controls.email.invalid ? this.emailInput() : this.passwordInput();
      first.nativeElement.focus();
      return;
    }
    const { email, password } = this.form.getRawValue();
    this.pending.set(true);
    this.session.signIn(email.trim(), password).subscribe({
      next: () => {
        this.pending.set(false);
        void this.router.navigateByUrl(safeReturnUrl(this.returnUrl()));
      },
      error: (error: unknown) => {
        this.pending.set(false);
        this.session.clear();
        this.serverError.set(describeError(error));
      },
    });
  }

  protected togglePasswordVisibility(): void {
    this.passwordVisible.update((visible) => !visible);
  }

  protected useDemoAccount(account: DemoAccount): void {
    this.form.setValue({ email: account.email, password: account.password });
    this.serverError.set(null);
  }
}
