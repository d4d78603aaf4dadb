import { DatePipe } from '@angular/common';
import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, DestroyRef, inject, OnInit, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { apiErrorMessage } from '../shared/api-error';
import { MailboxApi, type MailMessage } from './mailbox-api';

/** The development mailbox: what Ligandry "sent", caught by the local fake mail server. */
@Component({
  selector: 'lg-mailbox',
  imports: [DatePipe, RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule],
  templateUrl: './mailbox.html',
  styleUrl: './mailbox.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class Mailbox implements OnInit {
  private readonly api = inject(MailboxApi);
  private readonly destroyRef = inject(DestroyRef);

  private readonly messageList = signal<MailMessage[]>([]);
  protected readonly messages = this.messageList.asReadonly();
  protected readonly selectedId = signal<number | null>(null);
  protected readonly selected = computed(() => this.messages().find((m) => m.id === this.selectedId()) ?? null);
  protected readonly loading = signal(true);
  protected readonly loadError = signal<string | null>(null);
  /** The server has no development mailbox (production, or a real mail server is configured). */
  protected readonly unavailable = signal<string | null>(null);

  ngOnInit(): void {
    this.load();
  }

  protected load(): void {
    this.loading.set(true);
    this.loadError.set(null);
    this.unavailable.set(null);
    this.api
      .messages()
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (messages) => {
          this.loading.set(false);
          this.messageList.set(messages);
          if (!messages.some((m) => m.id === this.selectedId())) this.selectedId.set(messages[0]?.id ?? null);
        },
        error: (err: unknown) => {
          this.loading.set(false);
          if (err instanceof HttpErrorResponse && err.status === 404) this.unavailable.set(apiErrorMessage(err, 'There is no development mailbox on this server.'));
          else this.loadError.set(apiErrorMessage(err, 'The messages could not be loaded.'));
        },
      });
  }

  protected select(message: MailMessage): void {
    this.selectedId.set(message.id);
  }
}
