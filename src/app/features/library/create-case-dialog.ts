import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators, type AbstractControl, type ValidationErrors } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';

import { MAX_TAG_LENGTH, MAX_TAGS } from '../../../../shared/api/cases';
import { DEMO_RIGS, demoRigCase, templateCase } from '../../../../shared/case';
import { apiErrorOf, describeError } from '../../core/error-message';
import { CaseApi } from './case-api';
import type { CaseDetail } from './library-types';

export interface CreateCaseData {
  readonly labId: string;
  readonly labName: string;
}

const TEMPLATE_ID = 'template';

/** Splits "a, b ,c" into trimmed, distinct, non-empty tags. */
export function parseTags(value: string): string[] {
  return [...new Set(value.split(',').map((t) => t.trim()).filter((t) => t !== ''))];
}

/** What is wrong with the tags typed, in words naming the tag; null when the library takes them. */
export function tagsProblem(value: string): string | null {
  const tags = parseTags(value);
  if (tags.length > MAX_TAGS) return `At most ${MAX_TAGS} tags; this has ${tags.length}.`;
  const long = tags.find((t) => t.length > MAX_TAG_LENGTH);
  return long ? `“${long.slice(0, 24)}…” is ${long.length} characters long; a tag holds at most ${MAX_TAG_LENGTH}.` : null;
}

function tagsValidator(control: AbstractControl<string>): ValidationErrors | null {
  const problem = tagsProblem(control.value);
  return problem ? { tags: problem } : null;
}

function sentence(reason: string): string {
  return reason.charAt(0).toUpperCase() + reason.slice(1) + (reason.endsWith('.') ? '' : '.');
}

/** Title, tags and a starting point; closes with the created case. */
@Component({
  selector: 'qp-create-case-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule, MatSelectModule],
  template: `
    <h2 mat-dialog-title>New case in {{ data.labName }}</h2>
    <form [formGroup]="form" (ngSubmit)="create()" novalidate aria-label="New case">
      <mat-dialog-content class="fields">
        <mat-form-field>
          <mat-label>Title</mat-label>
          <input matInput formControlName="title" required maxlength="200" cdkFocusInitial />
          @if (form.controls.title.hasError('required')) {
            <mat-error>Give the case a title.</mat-error>
          } @else if (form.controls.title.getError('server'); as message) {
            <mat-error>{{ message }}</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>Tags</mat-label>
          <input matInput formControlName="tags" placeholder="shaker, upright" />
          <mat-hint>Separate tags with commas.</mat-hint>
          @if (form.controls.tags.getError('tags'); as message) {
            <mat-error>{{ message }}</mat-error>
          } @else if (form.controls.tags.getError('server'); as message) {
            <mat-error>{{ message }}</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>Start from</mat-label>
          <mat-select formControlName="start">
            <mat-option [value]="templateId">Blank template (20 cm point mass, 40 Hz)</mat-option>
            @for (rig of rigs; track rig.id) {
              <mat-option [value]="rig.id">Demo rig: {{ rig.title }}</mat-option>
            }
          </mat-select>
        </mat-form-field>
        @if (error(); as message) {
          <p class="form-error" role="alert">{{ message }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button matButton type="button" mat-dialog-close>Cancel</button>
        <button matButton="filled" type="submit" [disabled]="saving()">Create and open</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    .fields { display: flex; flex-direction: column; gap: 4px; min-width: min(420px, 80vw); }
    .form-error { color: var(--mat-sys-error); margin: 0; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CreateCaseDialog {
  private readonly api = inject(CaseApi);
  private readonly dialogRef = inject<MatDialogRef<CreateCaseDialog, CaseDetail>>(MatDialogRef);
  protected readonly data = inject<CreateCaseData>(MAT_DIALOG_DATA);

  protected readonly rigs = DEMO_RIGS;
  protected readonly templateId = TEMPLATE_ID;
  protected readonly form = inject(NonNullableFormBuilder).group({
    title: ['', [Validators.required]],
    tags: ['', [tagsValidator]],
    start: [TEMPLATE_ID],
  });
  protected readonly saving = signal(false);
  protected readonly error = signal<string | null>(null);

  protected create(): void {
    this.error.set(null);
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const { title, tags, start } = this.form.getRawValue();
    const params = start === TEMPLATE_ID ? templateCase() : (demoRigCase(start) ?? templateCase());
    this.saving.set(true);
    this.api.createCase(this.data.labId, { title: title.trim(), tags: parseTags(tags), params }).subscribe({
      next: (created) => this.dialogRef.close(created),
      error: (error: unknown) => {
        this.saving.set(false);
        const api = apiErrorOf(error);
        const field = api?.field?.split('.')[0];
        if (api && (field === 'title' || field === 'tags')) {
          // The server's message starts with its key ("tags.2: …"); the form shows the reason beside the field.
          this.form.controls[field].setErrors({ server: sentence(api.message.replace(/^[\w.]+: /, '')) });
        } else {
          this.error.set(describeError(error));
        }
      },
    });
  }
}
