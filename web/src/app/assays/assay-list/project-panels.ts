import { HttpClient } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { forkJoin, map, of, switchMap } from 'rxjs';
import { apiErrorMessage } from '../../shared/api-error';
import type { Target } from '../assay-api';

type PanelRole = 'none' | 'primary' | 'anti-target';

interface PanelEntry {
  targetId: number;
  role: 'primary' | 'anti-target';
  agonismUnwanted: boolean;
}

interface ProjectPanel {
  id: number;
  code: string;
  name: string;
  targets: PanelEntry[];
}

interface Draft {
  role: PanelRole;
  agonismUnwanted: boolean;
}

/** Each project's primary target and anti-targets, editable by admins and pharmacologists. */
@Component({
  selector: 'lg-project-panels',
  imports: [FormsModule, MatButtonModule, MatCheckboxModule, MatSelectModule],
  template: `
    <h3 class="title">Project panels</h3>
    <p class="muted">Each project names one primary target and its anti-targets; selectivity is measured against the primary target. Mark an anti-target where agonism alone is unwanted.</p>
    @if (projects.error()) {
      <p class="lg-error-text" role="alert">{{ error() }}</p>
    } @else if (!projectList().length && !projects.isLoading()) {
      <p class="muted">No project yet. A project lead or an administrator creates projects.</p>
    }
    @for (p of projectList(); track p.id) {
      <section class="project" [attr.aria-label]="'Panel of ' + p.code">
        <h4>{{ p.code }} <span class="muted">{{ p.name }}</span></h4>
        <table class="panel">
          <thead><tr><th scope="col">Receptor</th><th scope="col">Role in {{ p.code }}</th><th scope="col">Agonism unwanted</th></tr></thead>
          <tbody>
            @for (t of targets(); track t.id) {
              <!-- A retired receptor is listed only where the saved panel still holds it. -->
              @if (!t.retired || inSavedPanel(p, t.id)) {
              <tr>
                <td>{{ t.name }} <span class="muted">{{ t.geneSymbol }}</span>@if (t.retired) { <span class="muted"> · retired</span> }</td>
                <td>
                  @if (canEdit()) {
                    <mat-select [ngModel]="draftOf(p.id, t.id).role" (ngModelChange)="setRole(p.id, t.id, $event)" [aria-label]="'Role of ' + t.name + ' in ' + p.code">
                      <mat-option value="none">not in the panel</mat-option>
                      <mat-option value="primary">primary target</mat-option>
                      <mat-option value="anti-target">anti-target</mat-option>
                    </mat-select>
                  } @else {
                    {{ roleText(draftOf(p.id, t.id).role) }}
                  }
                </td>
                <td>
                  <mat-checkbox [disabled]="!canEdit() || draftOf(p.id, t.id).role !== 'anti-target'" [ngModel]="draftOf(p.id, t.id).agonismUnwanted" (ngModelChange)="setAgonism(p.id, t.id, $event)" [aria-label]="'Agonism at ' + t.name + ' unwanted in ' + p.code" />
                </td>
              </tr>
              }
            }
          </tbody>
        </table>
        @if (canEdit()) {
          <div class="actions">
            @if (primaryCount(p.id) > 1) {
              <span class="lg-error-text">Choose one primary target.</span>
            }
            <button mat-stroked-button type="button" [disabled]="saving() || primaryCount(p.id) > 1" (click)="save(p)">Save panel of {{ p.code }}</button>
          </div>
        }
      </section>
    }
  `,
  styles: `
    :host { display: block; margin-top: 24px; }
    .title { font: var(--mat-sys-title-medium); margin: 0 0 4px; }
    .muted { color: var(--mat-sys-on-surface-variant); font: var(--mat-sys-body-medium); }
    .project { border: 1px solid var(--mat-sys-outline-variant); border-radius: 12px; padding: 12px 16px; margin-top: 12px; background: var(--mat-sys-surface-container-lowest); }
    h4 { margin: 0 0 8px; font: var(--mat-sys-title-small); }
    .panel { border-collapse: collapse; width: 100%; }
    th, td { text-align: left; padding: 4px 12px 4px 0; border-bottom: 1px solid var(--mat-sys-outline-variant); }
    thead th { font: var(--mat-sys-label-medium); color: var(--mat-sys-on-surface-variant); }
    mat-select { max-width: 220px; }
    .actions { display: flex; gap: 12px; align-items: center; justify-content: flex-end; margin-top: 8px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ProjectPanels {
  private readonly http = inject(HttpClient);
  private readonly snackBar = inject(MatSnackBar);

  readonly targets = input.required<Target[]>();
  readonly canEdit = input(false);

  private readonly drafts = signal<Record<number, Record<number, Draft>>>({});
  protected readonly saving = signal(false);
  protected readonly projects = rxResource({
    stream: () =>
      this.http.get<{ items: { id: number }[] }>('/api/projects').pipe(
        switchMap((res) => (res.items.length ? forkJoin(res.items.map((p) => this.http.get<ProjectPanel>(`/api/projects/${p.id}`))) : of([]))),
        map((panels) => {
          const drafts: Record<number, Record<number, Draft>> = {};
          for (const p of panels) drafts[p.id] = Object.fromEntries(p.targets.map((t) => [t.targetId, { role: t.role, agonismUnwanted: t.agonismUnwanted }]));
          this.drafts.set(drafts);
          return panels;
        }),
      ),
  });
  protected readonly projectList = computed(() => this.projects.value() ?? []);
  protected readonly error = computed(() => apiErrorMessage(this.projects.error(), 'The project panels could not be loaded.'));

  protected inSavedPanel(project: ProjectPanel, targetId: number): boolean {
    return project.targets.some((t) => t.targetId === targetId);
  }

  protected draftOf(projectId: number, targetId: number): Draft {
    return this.drafts()[projectId]?.[targetId] ?? { role: 'none', agonismUnwanted: false };
  }

  protected roleText(role: PanelRole): string {
    return role === 'none' ? '—' : role === 'primary' ? 'primary target' : 'anti-target';
  }

  protected primaryCount(projectId: number): number {
    return Object.values(this.drafts()[projectId] ?? {}).filter((d) => d.role === 'primary').length;
  }

  protected setRole(projectId: number, targetId: number, role: PanelRole): void {
    this.update(projectId, targetId, { role, agonismUnwanted: role === 'anti-target' ? this.draftOf(projectId, targetId).agonismUnwanted : false });
  }

  protected setAgonism(projectId: number, targetId: number, agonismUnwanted: boolean): void {
    this.update(projectId, targetId, { ...this.draftOf(projectId, targetId), agonismUnwanted });
  }

  protected save(project: ProjectPanel): void {
    const entries = Object.entries(this.drafts()[project.id] ?? {})
      .filter(([, d]) => d.role !== 'none')
      .map(([targetId, d]) => ({ targetId: Number(targetId), role: d.role as 'primary' | 'anti-target', agonismUnwanted: d.agonismUnwanted }));
    this.saving.set(true);
    this.http.put<ProjectPanel>(`/api/projects/${project.id}/targets`, { targets: entries }).subscribe({
      next: () => {
        this.saving.set(false);
        this.snackBar.open(`Saved the panel of ${project.code}.`, 'OK', { duration: 4000 });
      },
      error: (err: unknown) => {
        this.saving.set(false);
        this.snackBar.open(apiErrorMessage(err, 'The panel could not be saved.'), 'OK', { duration: 8000 });
      },
    });
  }

  private update(projectId: number, targetId: number, draft: Draft): void {
    this.drafts.update((all) => ({ ...all, [projectId]: { ...(all[projectId] ?? {}), [targetId]: draft } }));
  }
}
