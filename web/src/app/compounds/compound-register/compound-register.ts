import { DecimalPipe } from '@angular/common';
import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, DestroyRef, inject, OnInit, signal, viewChild } from '@angular/core';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { Router, RouterLink } from '@angular/router';
import { catchError, debounceTime, map, of, switchMap, tap } from 'rxjs';
import { apiErrorCode, apiErrorMessage, apiFieldProblems } from '../../shared/api-error';
import { MoleculeView } from '../../shared/molecule-view';
import { CompoundApi, type BatchDraft, type BatchInput, type CompoundRef, type Preview, type Registration, type Series, type Structure, type StructureWarning } from '../compound-api';
import { describeStereo } from '../stereo-status';
import { StructureEditor, type Drawn } from './structure-editor';

type PreviewState = { kind: 'empty' } | { kind: 'loading' } | { kind: 'ready'; preview: Preview } | { kind: 'error'; message: string };

/** Server field names (zod paths) and the controls showing their problems. */
const FIELD_CONTROLS: Record<string, string> = {
  name: 'name',
  aliases: 'aliases',
  seriesId: 'seriesId',
  'batch.purity': 'purity',
  'batch.amountMg': 'amountMg',
  'batch.source': 'source',
  'batch.notebookRef': 'notebookRef',
};

@Component({
  selector: 'lg-compound-register',
  imports: [
    DecimalPipe, ReactiveFormsModule, RouterLink, MatFormFieldModule, MatInputModule, MatSelectModule, MatButtonModule, MatIconModule,
    MatCheckboxModule, MatProgressBarModule, MoleculeView, StructureEditor,
  ],
  templateUrl: './compound-register.html',
  styleUrl: './compound-register.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CompoundRegister implements OnInit {
  private readonly api = inject(CompoundApi);
  private readonly router = inject(Router);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);
  private readonly editor = viewChild.required(StructureEditor);

  protected readonly pasteControl = inject(FormBuilder).nonNullable.control('');
  protected readonly form = inject(FormBuilder).group({
    name: ['', Validators.maxLength(200)],
    aliases: [''],
    seriesId: [null as number | null],
    purity: [null as number | null, [Validators.min(0), Validators.max(100)]],
    amountMg: [null as number | null, Validators.min(0)],
    source: ['', Validators.maxLength(200)],
    notebookRef: ['', Validators.maxLength(100)],
    confirmed: [false],
  });

  private readonly structure = signal<Structure | null>(null);
  private readonly previewState = signal<PreviewState>({ kind: 'empty' });
  /** Set by a 409 from the registration itself (someone registered it meanwhile, or new warnings). */
  private readonly conflictDuplicate = signal<CompoundRef | null>(null);
  private readonly conflictWarnings = signal<StructureWarning[] | null>(null);
  private readonly seriesList = signal<Series[]>([]);

  protected readonly state = this.previewState.asReadonly();
  protected readonly series = this.seriesList.asReadonly();
  protected readonly busy = signal(false);
  protected readonly submitError = signal<string | null>(null);

  protected readonly preview = computed(() => {
    const s = this.state();
    return s.kind === 'ready' ? s.preview : null;
  });
  protected readonly structureError = computed(() => {
    const s = this.state();
    return s.kind === 'error' ? s.message : null;
  });
  protected readonly duplicate = computed(() => this.conflictDuplicate() ?? this.preview()?.duplicate ?? null);
  protected readonly warnings = computed(() => this.conflictWarnings() ?? this.preview()?.warnings ?? []);
  protected readonly stereoText = computed(() => {
    const p = this.preview()?.parsed.properties;
    return p ? describeStereo(p.stereoStatus, p.stereoCentres) : '';
  });
  protected readonly confirmLabel = computed(() => {
    const kinds = new Set(this.warnings().map((w) => w.kind));
    const what = [kinds.has('tautomer') ? 'possible tautomer' : null, [...kinds].some((k) => k !== 'tautomer') ? 'stereochemistry' : null].filter(Boolean);
    return `I checked the ${what.join(' and ') || 'structure'} and want to register a new compound`;
  });
  private readonly confirmed = signal(false);
  protected readonly blocker = computed(() => {
    const s = this.state();
    if (s.kind === 'empty') return 'Draw or paste a structure first.';
    if (s.kind === 'loading') return 'Checking the structure…';
    if (s.kind === 'error') return 'Correct the structure first.';
    if (this.duplicate()) return 'This structure is already registered: add a batch to it instead.';
    if (this.warnings().length && !this.confirmed()) return 'Confirm that you checked the warnings above.';
    return null;
  });

  constructor() {
    toObservable(this.structure)
      .pipe(
        tap((s) => {
          this.conflictDuplicate.set(null);
          this.conflictWarnings.set(null);
          this.form.controls.confirmed.setValue(false);
          this.previewState.set(s ? { kind: 'loading' } : { kind: 'empty' });
        }),
        debounceTime(400),
        switchMap((s) =>
          s
            ? this.api.preview(s).pipe(
                map((preview): PreviewState => ({ kind: 'ready', preview })),
                catchError((err: unknown) => of<PreviewState>({ kind: 'error', message: structureMessage(err) })),
              )
            : of<PreviewState>({ kind: 'empty' }),
        ),
        takeUntilDestroyed(),
      )
      .subscribe((state) => this.previewState.set(state));
  }

  ngOnInit(): void {
    this.watchPasteBox();
    this.form.controls.confirmed.valueChanges.pipe(takeUntilDestroyed(this.destroyRef)).subscribe((v) => this.confirmed.set(!!v));
    this.api
      .series()
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ next: (list) => this.seriesList.set(list), error: () => this.seriesList.set([]) });
  }

  protected useDrawing(drawn: Drawn | null): void {
    this.pasteControl.setValue(drawn?.smiles ?? '', { emitEvent: false });
    this.structure.set(drawn ? { structure: drawn.molfile, format: 'molfile' } : null);
  }

  protected addBatchInstead(existing: CompoundRef): void {
    const draft: BatchDraft = { ...(this.structure() ?? {}), ...this.batchInput() };
    void this.router.navigate(['/compounds', existing.registryNumber], { queryParams: { addBatch: 1 }, state: { batchDraft: draft } });
  }

  protected registerCompound(): void {
    const structure = this.structure();
    if (!structure || this.blocker()) return;
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const v = this.form.getRawValue();
    const aliases = (v.aliases ?? '').split(',').map((a) => a.trim()).filter(Boolean);
    const registration: Registration = {
      ...structure,
      name: v.name?.trim() || undefined,
      aliases: aliases.length ? aliases : undefined,
      seriesId: v.seriesId ?? undefined,
      batch: this.batchInput(),
      confirm: this.warnings().length ? this.confirmed() : undefined,
    };
    this.busy.set(true);
    this.submitError.set(null);
    this.api.register(registration).subscribe({
      next: (compound) => {
        this.snackBar.open(`Registered ${compound.registryNumber}`, 'OK', { duration: 6000 });
        void this.router.navigate(['/compounds', compound.registryNumber]);
      },
      error: (err: unknown) => {
        this.busy.set(false);
        this.showRegisterError(err);
      },
    });
  }

  private batchInput(): BatchInput {
    const v = this.form.getRawValue();
    const batch: BatchInput = {};
    if (v.purity !== null && v.purity !== undefined) batch.purity = v.purity;
    if (v.amountMg !== null && v.amountMg !== undefined) batch.amountMg = v.amountMg;
    if (v.source?.trim()) batch.source = v.source.trim();
    if (v.notebookRef?.trim()) batch.notebookRef = v.notebookRef.trim();
    return batch;
  }

  private showRegisterError(err: unknown): void {
    const code = apiErrorCode(err);
    const details = err instanceof HttpErrorResponse ? (err.error as { error?: { details?: Record<string, unknown> } } | null)?.error?.details : undefined;
    if (code === 'duplicate_structure' && details?.['existing']) {
      this.conflictDuplicate.set(details['existing'] as CompoundRef);
      return;
    }
    if (code === 'confirmation_required' && Array.isArray(details?.['warnings'])) {
      this.conflictWarnings.set(details['warnings'] as StructureWarning[]);
      this.form.controls.confirmed.setValue(false);
      return;
    }
    let placed = false;
    for (const problem of apiFieldProblems(err)) {
      const control = this.form.get(FIELD_CONTROLS[problem.field] ?? FIELD_CONTROLS[problem.field.replace(/\.\d+$/, '')] ?? '');
      if (control) {
        control.setErrors({ server: problem.message });
        control.markAsTouched();
        placed = true;
      } else if (problem.field === 'structure') {
        this.previewState.set({ kind: 'error', message: problem.message });
        placed = true;
      }
    }
    this.submitError.set(placed ? 'Correct the marked fields and register again.' : apiErrorMessage(err, 'The compound could not be registered.'));
  }

  private watchPasteBox(): void {
    this.pasteControl.valueChanges.pipe(debounceTime(250), takeUntilDestroyed(this.destroyRef)).subscribe((text) => {
      this.editor().show(text);
      this.structure.set(text.trim() ? { structure: text } : null);
    });
  }
}

/** A 400 from the preview names the structure problem; drop the "structure:" prefix. */
function structureMessage(err: unknown): string {
  return apiErrorMessage(err, 'The structure could not be checked.').replace(/^structure:\s*/, '');
}
