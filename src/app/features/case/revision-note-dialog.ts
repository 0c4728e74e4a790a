import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';

/** Longest note the server keeps. */
export const REVISION_NOTE_MAX = 2000;

const KEY_PREFIX = 'qp.revisionNote.';

function storage(): Storage | null {
  try {
    return typeof localStorage === 'undefined' ? null : localStorage;
  } catch {
    return null;
  }
}

/**
 * The note being written for a case's next revision, kept in this browser per case (`new` for a case not saved
 * yet) until that revision is saved, so a cancelled or refused save does not lose it.
 */
export const revisionNoteDrafts = {
  read(caseKey: string): string {
    return storage()?.getItem(KEY_PREFIX + caseKey) ?? '';
  },
  write(caseKey: string, note: string): void {
    const store = storage();
    if (!store) return;
    if (note.trim() === '') store.removeItem(KEY_PREFIX + caseKey);
    else store.setItem(KEY_PREFIX + caseKey, note);
  },
  clear(caseKey: string): void {
    storage()?.removeItem(KEY_PREFIX + caseKey);
  },
};

export interface RevisionNoteData {
  /** Case id, or `new`. */
  readonly caseKey: string;
  /** The number the revision will get, when known. */
  readonly nextRevision: number | null;
  /** A note the page proposes (e.g. after applying a bench fit), used when none is being written. */
  readonly suggested?: string;
}

/** Asks for a short, optional note before a new revision is saved; closes with the note, or undefined on Cancel. */
@Component({
  selector: 'qp-revision-note-dialog',
  imports: [FormsModule, MatButtonModule, MatDialogModule, MatFormFieldModule, MatInputModule],
  template: `
    <h2 mat-dialog-title>Save {{ data.nextRevision ? 'as r' + data.nextRevision : 'the case' }}</h2>
    <form (ngSubmit)="save()" aria-label="Revision note">
      <mat-dialog-content>
        <mat-form-field class="note-field">
          <mat-label>What changed (optional)</mat-label>
          <textarea
            matInput
            name="note"
            rows="3"
            cdkFocusInitial
            [maxlength]="max"
            [ngModel]="note()"
            (ngModelChange)="edit($event)"
            data-testid="revision-note"
          ></textarea>
          <mat-hint align="end">{{ note().length }} / {{ max }}</mat-hint>
        </mat-form-field>
        <p class="hint">The note shows in History beside the revision; it is kept here until you save.</p>
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button matButton type="button" (click)="cancel()">Cancel</button>
        <button matButton="filled" type="submit" data-testid="save-revision">Save</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    .note-field { width: min(480px, 80vw); }
    .hint { margin: 0; font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RevisionNoteDialog {
  protected readonly data = inject<RevisionNoteData>(MAT_DIALOG_DATA);
  private readonly ref = inject<MatDialogRef<RevisionNoteDialog, string>>(MatDialogRef);

  protected readonly max = REVISION_NOTE_MAX;
  protected readonly note = signal(revisionNoteDrafts.read(this.data.caseKey) || (this.data.suggested ?? ''));

  protected edit(text: string): void {
    this.note.set(text);
    revisionNoteDrafts.write(this.data.caseKey, text);
  }

  protected save(): void {
    this.ref.close(this.note().trim());
  }

  protected cancel(): void {
    this.ref.close(undefined);
  }
}
