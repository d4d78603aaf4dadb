import {
  afterNextRender,
  AfterViewInit,
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  Injector,
  input,
  OnInit,
  output,
  signal,
  viewChild,
} from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormControl, FormGroup, FormGroupDirective, ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { MatSliderModule } from '@angular/material/slider';
import { Molecule } from 'openchemlib';
import { debounceTime } from 'rxjs';
import type { FieldProblem } from '../../shared/api-error';
import type { Project, Series } from '../compound-api';
import { StructureEditor, type Drawn } from '../compound-register/structure-editor';
import { emptySpec, fieldOf, isActive, looksLikeMolfile, MAX_LIMIT, type SearchField, type SearchMode, type SearchSpec } from './search-spec';

/** What the panel asks the list to run. */
export interface SearchRequest {
  spec: SearchSpec;
  seriesId: number | null;
}

/**
 * How a drawing is sent and kept in the address: as its SMILES when that SMILES, read back, is the
 * same query (same OpenChemLib ID code as a fragment), else as the drawing's molfile, which keeps
 * what SMILES cannot say (atom lists, ring or chain bonds, hydrogen counts, drawn stereo).
 */
export function queryOf(drawn: Drawn): { smiles: string } | { molfile: string } {
  try {
    const drawing = Molecule.fromMolfile(drawn.molfile);
    drawing.setFragment(true);
    const back = Molecule.fromSmiles(drawn.smiles);
    back.setFragment(true);
    if (drawing.getIDCode() === back.getIDCode()) return { smiles: drawn.smiles };
  } catch {
    // the SMILES does not read back (an atom list written as [N,O]): keep the molfile
  }
  return { molfile: drawn.molfile };
}

function upperFirst(text: string): string {
  return text ? text[0].toUpperCase() + text.slice(1) : text;
}

/** The structure-search form: editor and SMILES/SMARTS box, mode, similarity settings and filters. */
@Component({
  selector: 'lg-structure-search',
  imports: [
    ReactiveFormsModule, MatButtonModule, MatButtonToggleModule, MatFormFieldModule, MatIconModule, MatInputModule, MatSelectModule, MatSliderModule,
    StructureEditor,
  ],
  templateUrl: './structure-search.html',
  styleUrl: './structure-search.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StructureSearch implements OnInit, AfterViewInit {
  private readonly injector = inject(Injector);

  /** The search the list is showing, to start from. */
  readonly initial = input<SearchSpec | null>(null);
  /** The list's series filter, to start from. */
  readonly seriesId = input<number | null>(null);
  readonly projects = input<Project[]>([]);
  readonly series = input<Series[]>([]);
  /** What the server found wrong with the last search. */
  readonly problems = input<FieldProblem[]>([]);

  readonly search = output<SearchRequest>();
  readonly cleared = output<void>();

  private readonly editor = viewChild.required(StructureEditor);
  /** The form's directive, to reset its submitted state too. */
  private readonly formDir = viewChild(FormGroupDirective);

  protected readonly form = new FormGroup({
    mode: new FormControl<SearchMode>('substructure', { nonNullable: true }),
    text: new FormControl('', { nonNullable: true }),
    threshold: new FormControl<number | null>(0.7),
    limit: new FormControl<number | null>(100),
    project: new FormControl<number | null>(null),
    series: new FormControl<number | null>(null),
    mwMin: new FormControl<number | null>(null),
    mwMax: new FormControl<number | null>(null),
    clogpMin: new FormControl<number | null>(null),
    clogpMax: new FormControl<number | null>(null),
    tpsaMax: new FormControl<number | null>(null),
    registeredFrom: new FormControl('', { nonNullable: true }),
    registeredTo: new FormControl('', { nonNullable: true }),
  });
  protected readonly f = this.form.controls;

  protected readonly mode = signal<SearchMode>('substructure');
  private readonly projectId = signal<number | null>(null);
  /** The drawing's molfile when it has query features SMILES cannot hold; the text box is then empty. */
  protected readonly drawnQuery = signal<string | null>(null);
  protected readonly maxLimit = MAX_LIMIT;

  protected readonly seriesChoices = computed(() => {
    const project = this.projects().find((p) => p.id === this.projectId());
    return project ? this.series().filter((s) => s.projectCode === project.code) : this.series();
  });

  /** Problems that belong to no field of the panel (the text box above, the whole request). */
  protected readonly generalProblem = computed(() => {
    const rest = this.problems().filter((p) => ['text', 'other'].includes(fieldOf(p.field)));
    return rest.map((p) => upperFirst(p.message)).join(' ');
  });

  protected readonly formatThreshold = (value: number): string => value.toFixed(2);

  /** Shows the server's problems next to their fields. */
  private readonly showProblems = effect(() => {
    for (const problem of this.problems()) {
      const control = this.controlFor(fieldOf(problem.field));
      if (!control) continue;
      control.setErrors({ problem: upperFirst(problem.message) });
      control.markAsTouched();
    }
  });

  constructor() {
    this.f.mode.valueChanges.pipe(takeUntilDestroyed()).subscribe((mode) => this.mode.set(mode));
    this.f.project.valueChanges.pipe(takeUntilDestroyed()).subscribe((id) => this.keepSeriesInProject(id));
    this.f.text.valueChanges.pipe(takeUntilDestroyed()).subscribe(() => this.drawnQuery.set(null));
    this.f.text.valueChanges.pipe(debounceTime(400), takeUntilDestroyed()).subscribe((text) => this.editor().show(text));
  }

  ngOnInit(): void {
    this.fill(this.initial() ?? emptySpec(), this.seriesId());
  }

  ngAfterViewInit(): void {
    // The editor makes its canvas after the first render; draw the starting query once it has.
    afterNextRender(() => this.drawStart(), { injector: this.injector });
  }

  protected useDrawing(drawn: Drawn | null): void {
    const query = drawn ? queryOf(drawn) : { smiles: '' };
    this.f.text.setValue('smiles' in query ? query.smiles : '', { emitEvent: false });
    this.drawnQuery.set('molfile' in query ? query.molfile : null);
    this.f.text.updateValueAndValidity({ emitEvent: false });
  }

  protected runSearch(): void {
    for (const control of Object.values(this.f)) control.updateValueAndValidity({ emitEvent: false });
    const spec = this.specFromForm();
    const seriesId = this.f.series.value;
    const problems = this.check(spec, seriesId);
    for (const [field, message] of problems) {
      const control = this.controlFor(field)!;
      control.setErrors({ problem: message });
      control.markAsTouched();
    }
    if (problems.length) return;
    this.search.emit({ spec, seriesId });
  }

  protected clearSearch(): void {
    this.formDir()?.resetForm(); // forgets that the form was submitted, so no field shows an error
    this.fill(emptySpec(this.mode()), null);
    this.editor().show('');
    this.cleared.emit();
  }

  private specFromForm(): SearchSpec {
    const v = this.form.getRawValue();
    const threshold = v.threshold === null ? NaN : Math.round(v.threshold * 100) / 100;
    return {
      mode: v.mode,
      structure: this.drawnQuery() ?? v.text.trim(),
      threshold,
      limit: v.limit ?? NaN,
      projectId: v.project,
      mwMin: v.mwMin,
      mwMax: v.mwMax,
      clogpMin: v.clogpMin,
      clogpMax: v.clogpMax,
      tpsaMax: v.tpsaMax,
      registeredFrom: v.registeredFrom || null,
      registeredTo: v.registeredTo || null,
    };
  }

  /** The checks the server would make, answered at once; the server still checks the structure. */
  private check(spec: SearchSpec, seriesId: number | null): [SearchField, string][] {
    const problems: [SearchField, string][] = [];
    const similarity = spec.mode === 'similarity';
    if (similarity && !spec.structure) problems.push(['structure', 'Draw or paste the structure to compare with.']);
    if (!similarity && !isActive(spec) && seriesId === null) problems.push(['structure', 'Draw or paste a structure, or set at least one filter.']);
    if (similarity && !(spec.threshold >= 0 && spec.threshold <= 1)) problems.push(['threshold', 'Between 0 and 1']);
    if (similarity && !(Number.isInteger(spec.limit) && spec.limit >= 1 && spec.limit <= MAX_LIMIT)) problems.push(['limit', `A whole number, 1 to ${MAX_LIMIT.toLocaleString('en-US')}`]);
    if (spec.mwMin !== null && spec.mwMax !== null && spec.mwMin > spec.mwMax) problems.push(['mw', 'The minimum is above the maximum']);
    if (spec.clogpMin !== null && spec.clogpMax !== null && spec.clogpMin > spec.clogpMax) problems.push(['clogp', 'The minimum is above the maximum']);
    if (spec.registeredFrom && spec.registeredTo && spec.registeredFrom > spec.registeredTo) problems.push(['registeredTo', 'Before the start date']);
    return problems;
  }

  private controlFor(field: SearchField): FormControl | null {
    const controls: Partial<Record<SearchField, FormControl>> = {
      structure: this.f.text,
      threshold: this.f.threshold,
      limit: this.f.limit,
      project: this.f.project,
      series: this.f.series,
      mw: this.f.mwMin,
      clogp: this.f.clogpMin,
      tpsa: this.f.tpsaMax,
      registeredFrom: this.f.registeredFrom,
      registeredTo: this.f.registeredTo,
    };
    return (controls[field] as FormControl | undefined) ?? null;
  }

  private fill(spec: SearchSpec, seriesId: number | null): void {
    const molfile = looksLikeMolfile(spec.structure);
    const value = {
      mode: spec.mode,
      text: molfile ? '' : spec.structure,
      threshold: spec.threshold,
      limit: spec.limit,
      project: spec.projectId,
      series: seriesId,
      mwMin: spec.mwMin,
      mwMax: spec.mwMax,
      clogpMin: spec.clogpMin,
      clogpMax: spec.clogpMax,
      tpsaMax: spec.tpsaMax,
      registeredFrom: spec.registeredFrom ?? '',
      registeredTo: spec.registeredTo ?? '',
    };
    this.form.reset(value, { emitEvent: false });
    this.mode.set(spec.mode);
    this.projectId.set(spec.projectId);
    this.drawnQuery.set(molfile ? spec.structure : null);
  }

  private drawStart(): void {
    const structure = this.drawnQuery() ?? this.f.text.value;
    if (structure.trim()) this.editor().show(structure);
  }

  private keepSeriesInProject(projectId: number | null): void {
    this.projectId.set(projectId);
    const seriesId = this.f.series.value;
    if (seriesId !== null && !this.seriesChoices().some((s) => s.id === seriesId)) this.f.series.setValue(null);
  }
}
