import { ChangeDetectionStrategy, Component } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { RouterLink } from '@angular/router';

@Component({
  selector: 'lg-not-allowed',
  imports: [RouterLink, MatButtonModule],
  template: `
    <h1 class="lg-page-title">Not available to your role</h1>
    <p class="lg-page-lead">Your role does not include this section. Ask an administrator if you need it.</p>
    <a mat-stroked-button routerLink="/">Go to the start page</a>
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class NotAllowed {}
