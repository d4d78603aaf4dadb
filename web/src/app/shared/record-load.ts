import { HttpErrorResponse } from '@angular/common/http';
import { computed, DestroyRef, inject, type Signal, signal } from '@angular/core';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { catchError, map, merge, type Observable, of, Subject, switchMap, tap } from 'rxjs';
import { apiErrorMessage } from './api-error';

/** Where the page of one record stands: `missing` is a 404 or 400 (no such record, or not a valid key). */
export type LoadState<T> = { kind: 'loading' } | { kind: 'ready'; value: T } | { kind: 'missing' } | { kind: 'error'; message: string };

export interface RecordLoad<T> {
  readonly state: Signal<LoadState<T>>;
  /** The record once it is loaded, else null. */
  readonly value: Signal<T | null>;
  /** Why the record could not be loaded (not for a missing record), else null. */
  readonly error: Signal<string | null>;
  /** Fetches the record again; the page keeps showing the one it has until the answer comes. */
  reload(): void;
}

export interface RecordLoadOptions<T> {
  /** The message when the API gives none ("The run could not be loaded."). */
  failure: string;
  /** Called when the record of a new key has loaded (not after `reload()`). */
  loaded?: (value: T) => void;
}

/**
 * Loads the record that `key` (an address parameter) names, and loads again whenever the key changes.
 * `fetch` returns null for a key that cannot name a record, which is then missing without a request.
 * Call it in an injection context (a field initialiser); requests end with the component.
 */
export function loadRecord<K, T>(key: Signal<K>, fetch: (key: K) => Observable<T> | null, options: RecordLoadOptions<T>): RecordLoad<T> {
  const destroyRef = inject(DestroyRef);
  const state = signal<LoadState<T>>({ kind: 'loading' });
  const reloads = new Subject<void>();

  const request = (k: K): Observable<LoadState<T>> => {
    const value$ = fetch(k);
    if (!value$) return of({ kind: 'missing' });
    return value$.pipe(
      map((value): LoadState<T> => ({ kind: 'ready', value })),
      catchError((err: unknown) =>
        of<LoadState<T>>(
          err instanceof HttpErrorResponse && (err.status === 404 || err.status === 400)
            ? { kind: 'missing' }
            : { kind: 'error', message: apiErrorMessage(err, options.failure) },
        ),
      ),
    );
  };

  // One stream, so that a new key also cancels a reload still on its way.
  merge(
    toObservable(key).pipe(map((k) => ({ key: k, isNew: true }))),
    reloads.pipe(map(() => ({ key: key(), isNew: false }))),
  )
    .pipe(
      tap(({ isNew }) => {
        if (isNew) state.set({ kind: 'loading' });
      }),
      switchMap(({ key: k, isNew }) => request(k).pipe(map((s) => ({ s, isNew })))),
      takeUntilDestroyed(destroyRef),
    )
    .subscribe(({ s, isNew }) => {
      state.set(s);
      if (isNew && s.kind === 'ready') options.loaded?.(s.value);
    });

  return {
    state: state.asReadonly(),
    value: computed(() => {
      const s = state();
      return s.kind === 'ready' ? s.value : null;
    }),
    error: computed(() => {
      const s = state();
      return s.kind === 'error' ? s.message : null;
    }),
    reload: () => reloads.next(),
  };
}

/** The id in an address (`/assays/12`) as a number, or null when it cannot be one. */
export function idFromAddress(text: string): number | null {
  const id = Number(text);
  return Number.isInteger(id) && id > 0 ? id : null;
}
