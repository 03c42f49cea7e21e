import { ComponentHarness } from '@angular/cdk/testing';

const squeeze = (text: string) => text.replace(/\s+/g, ' ').trim();

/**
 * Test harness of `em-rehearsal-cell`: one applicator's rehearsal in a column of the
 * comparison, read as its reader meets it (the plot's name, the run's settings, the engine's
 * note) and its "Replay in 3D" button.
 */
export class RehearsalCellHarness extends ComponentHarness {
  static hostSelector = 'em-rehearsal-cell';

  private readonly canvas = this.locatorFor('em-rehearsal-plot canvas');
  private readonly samples = this.locatorForAll('em-rehearsal-plot li');
  private readonly run = this.locatorFor('[data-rehearsal-run]');
  private readonly note = this.locatorForOptional('[data-rehearsal-note]');
  private readonly replayButton = this.locatorFor('[data-testid="rehearsal-open-replay"]');

  /** The plot's accessible name: its summary in words. */
  async getPlotLabel(): Promise<string> {
    return (await (await this.canvas()).getAttribute('aria-label')) ?? '';
  }

  /** The samples as listed for screen readers, one line each. */
  async getSampleLines(): Promise<string[]> {
    return Promise.all((await this.samples()).map(async (item) => squeeze(await item.text())));
  }

  async getRunLine(): Promise<string> {
    return squeeze(await (await this.run()).text());
  }

  async getNote(): Promise<string> {
    const note = await this.note();
    return note ? squeeze(await note.text()) : '';
  }

  async openReplay(): Promise<void> {
    await (await this.replayButton()).click();
  }
}
