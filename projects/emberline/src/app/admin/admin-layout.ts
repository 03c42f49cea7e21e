import { ChangeDetectionStrategy, Component } from '@angular/core';
import { MatTabLink, MatTabNav, MatTabNavPanel } from '@angular/material/tabs';
import { RouterLink, RouterLinkActive, RouterOutlet } from '@angular/router';

/** Administration: one tab per area. */
@Component({
  selector: 'em-admin-layout',
  imports: [RouterOutlet, RouterLink, RouterLinkActive, MatTabNav, MatTabLink, MatTabNavPanel],
  template: `
    <section class="em-page" aria-labelledby="admin-title">
      <h1 id="admin-title">Administration</h1>
      <nav mat-tab-nav-bar [tabPanel]="panel" aria-label="Areas of administration">
        @for (area of areas; track area.path) {
          <a
            mat-tab-link
            [routerLink]="area.path"
            routerLinkActive
            #active="routerLinkActive"
            [active]="active.isActive"
          >
            {{ area.label }}
          </a>
        }
      </nav>
      <mat-tab-nav-panel #panel>
        <router-outlet />
      </mat-tab-nav-panel>
    </section>
  `,
  styles: `
    mat-tab-nav-panel {
      display: block;
      padding-top: 16px;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AdminLayout {
  protected readonly areas = [
    { path: 'users', label: 'Users' },
    { path: 'boards', label: 'Boards' },
    { path: 'applicator-profiles', label: 'Applicator profiles' },
    { path: 'safety-profiles', label: 'Safety profiles' },
    { path: 'checklist-thresholds', label: 'Checklist thresholds' },
    { path: 'audit', label: 'Audit log' },
  ];
}
