import { ChangeDetectionStrategy, Component, input } from '@angular/core';
import { FormControl, ReactiveFormsModule } from '@angular/forms';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';

/** A numeric input with its unit as a suffix and the case issue (if any) under it. */
@Component({
  selector: 'qp-number-field',
  imports: [ReactiveFormsModule, MatFormFieldModule, MatInputModule],
  template: `
    <mat-form-field subscriptSizing="dynamic">
      <mat-label>{{ label() }}</mat-label>
      <input matInput type="number" [formControl]="control()" [attr.step]="step()" [attr.data-field]="name()" />
      @if (unit()) {
        <span matTextSuffix>&nbsp;{{ unit() }}</span>
      }
      @if (hint()) {
        <mat-hint>{{ hint() }}</mat-hint>
      }
      <mat-error>{{ message() ?? 'Check this value' }}</mat-error>
    </mat-form-field>
  `,
  styles: `
    :host { display: block; min-width: 0; }
    mat-form-field { width: 100%; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class NumberField {
  readonly control = input.required<FormControl<number | null>>();
  readonly label = input.required<string>();
  /** Form path, exposed as data-field for tests and for focusing the first problem. */
  readonly name = input<string>('');
  readonly unit = input<string>('');
  readonly hint = input<string>('');
  readonly message = input<string | null>(null);
  readonly step = input<string>('any');
}
