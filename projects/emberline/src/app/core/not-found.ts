import { ChangeDetectionStrategy, Component, inject } from '@angular/core';
import { Router, RouterLink } from '@angular/router';

@Component({
  selector: 'em-not-found',
  imports: [RouterLink],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <section class="em-page" aria-labelledby="not-found-title">
      <div class="em-panel">
        <h1 id="not-found-title">No such page</h1>
        <p>
          The address <code>{{ address }}</code> does not lead to any page of Emberline.
          <a routerLink="/cases">Go to the cases</a>.
        </p>
      </div>
    </section>
  `,
})
export class NotFound {
  protected readonly address = inject(Router).url;
}
