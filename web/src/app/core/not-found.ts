import { ChangeDetectionStrategy, Component } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { RouterLink } from '@angular/router';

@Component({
  selector: 'lg-not-found',
  imports: [RouterLink, MatButtonModule],
  template: `
    <h1 class="lg-page-title">Page not found</h1>
    <p class="lg-page-lead">There is no page at this address.</p>
    <a mat-stroked-button routerLink="/">Go to the start page</a>
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class NotFound {}
