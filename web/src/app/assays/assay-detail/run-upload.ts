import { ChangeDetectionStrategy, Component, computed, DestroyRef, inject, input, signal } from '@angular/core';
import { takeUntilDestroyed, toSignal } from '@angular/core/rxjs-interop';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { Router } from '@angular/router';
import { apiErrorCode, apiErrorMessage, apiFieldProblems, type FieldProblem } from '../../shared/api-error';
import { saveFile } from '../../compounds/save-file';
import { AssayApi, type Assay, type AssayKind, type RunUpload as Upload, type TemplateName } from '../assay-api';

type Format = 'long' | 'plate';
type Slot = 'file' | 'matrix' | 'map';

interface Problems {
  message: string;
  details: FieldProblem[];
  /** Every problem is in a row or well, so leaving those out leaves a valid file. */
  droppable: boolean;
}

/** Which controls each kind of assay normalises with. */
const CONTROLS: Record<AssayKind, string> = {
  binding: 'BASAL wells (total binding) and BLANK wells (non-specific binding): responses become % specific binding.',
  'functional-agonist': 'BASAL and MAX wells (MAX: the reference agonist at a full concentration), or a curve of the reference agonist: responses become % of the reference over basal.',
  'functional-antagonist': 'BASAL wells and MAX wells (the agonist alone): responses become % inhibition of the agonist response.',
  'allosteric-modulation': 'BASAL and MAX wells, or a curve of the reference agonist: responses become % of the reference over basal.',
};

function today(): string {
  const d = new Date();
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, '0')}-${String(d.getDate()).padStart(2, '0')}`;
}

/** The "Upload a run" panel of an assay page: raw data in, draft results out (then the run page). */
@Component({
  selector: 'lg-run-upload',
  imports: [ReactiveFormsModule, MatButtonModule, MatButtonToggleModule, MatFormFieldModule, MatIconModule, MatInputModule, MatProgressBarModule],
  templateUrl: './run-upload.html',
  styleUrl: './run-upload.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RunUpload {
  private readonly api = inject(AssayApi);
  private readonly router = inject(Router);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);

  readonly assay = input.required<Assay>();

  protected readonly form = inject(FormBuilder).nonNullable.group({
    runDate: [today(), [Validators.required, Validators.pattern(/^\d{4}-\d{2}-\d{2}$/)]],
    format: ['long' as Format],
    notes: ['', Validators.maxLength(4000)],
  });
  protected readonly format = toSignal(this.form.controls.format.valueChanges, { initialValue: 'long' as Format });
  private readonly chosen = signal<Partial<Record<Slot, File>>>({});
  protected readonly files = this.chosen.asReadonly();
  protected readonly uploading = signal(false);
  protected readonly progress = signal<number | null>(null);
  protected readonly problems = signal<Problems | null>(null);
  protected readonly missingFiles = signal(false);
  protected readonly controlsNeeded = computed(() => CONTROLS[this.assay().kind]);
  protected readonly ready = computed(() => {
    const f = this.files();
    return this.format() === 'long' ? !!f.file : !!f.matrix && !!f.map;
  });

  protected chooseFile(slot: Slot, input: HTMLInputElement): void {
    const file = input.files?.[0] ?? null;
    input.value = '';
    if (!file) return;
    this.chosen.update((f) => ({ ...f, [slot]: file }));
    this.problems.set(null);
    this.missingFiles.set(false);
  }

  protected changeFormat(): void {
    this.problems.set(null);
    this.missingFiles.set(false);
  }

  protected upload(dropBadRows = false): void {
    if (this.uploading()) return;
    if (this.form.invalid || !this.ready()) {
      this.form.markAllAsTouched();
      this.missingFiles.set(!this.ready());
      return;
    }
    const v = this.form.getRawValue();
    const f = this.files();
    const upload: Upload = {
      runDate: v.runDate,
      notes: v.notes,
      dropBadRows,
      files: v.format === 'long' ? { file: f.file! } : { matrix: f.matrix!, map: f.map! },
    };
    this.uploading.set(true);
    this.progress.set(0);
    this.problems.set(null);
    this.api
      .uploadRun(this.assay().id, upload)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (event) => {
          if (event.kind === 'progress') {
            this.progress.set(event.percent);
            return;
          }
          const { runId, results, droppedRows } = event.created;
          const left = droppedRows ? `; ${droppedRows} row${droppedRows === 1 ? '' : 's'} with problems left out` : '';
          this.snackBar.open(`Run uploaded: ${results === 1 ? '1 curve fitted as a draft' : `${results} curves fitted as drafts`}${left}.`, 'OK', { duration: 7000 });
          void this.router.navigate(['/assays/runs', runId]);
        },
        error: (err: unknown) => {
          this.uploading.set(false);
          this.progress.set(null);
          const details = apiFieldProblems(err);
          this.problems.set({
            message: apiErrorMessage(err, 'The run could not be uploaded.'),
            details,
            droppable: apiErrorCode(err) === 'invalid_raw_data' && details.length > 0 && details.every((d) => /^(row \d+|well )/.test(d.field)),
          });
        },
      });
  }

  protected downloadTemplate(name: TemplateName): void {
    this.api.template(name).subscribe({
      next: (blob) => saveFile(blob, `ligandry-${name}`),
      error: (err: unknown) => this.snackBar.open(apiErrorMessage(err, 'The template could not be downloaded.'), 'OK', { duration: 6000 }),
    });
  }
}
