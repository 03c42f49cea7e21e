import { ComponentHarness, HarnessPredicate, type BaseHarnessFilters } from '@angular/cdk/testing';

/** The figures of a summary line, by the key its cell carries. */
export type SummaryFigureKey = 'clearance' | 'coverage' | 'margin' | 'zone-model';

export interface SummaryFigureContent {
  /** The figure with its unit (and its bound). */
  value: string;
  /** What it is measured against. */
  note: string;
  /** Marked as missing its threshold, by a sign and in words. */
  isShort: boolean;
}

export interface SummaryLineHarnessFilters extends BaseHarnessFilters {
  planName?: string | RegExp;
}

const squeeze = (text: string) => text.replace(/\s+/g, ' ').trim();

/** A line of the comparison's summary band: one plan. */
export class SummaryLineHarness extends ComponentHarness {
  static hostSelector = 'tr[data-summary-plan]';

  static with(options: SummaryLineHarnessFilters = {}): HarnessPredicate<SummaryLineHarness> {
    return new HarnessPredicate(SummaryLineHarness, options).addOption(
      'planName',
      options.planName,
      (harness, name) => HarnessPredicate.stringMatches(harness.getPlanName(), name),
    );
  }

  private readonly name = this.locatorFor('.plan-name');
  private readonly earlier = this.locatorForOptional('[data-summary-earlier-inputs]');
  private readonly verdictCell = this.locatorFor('[data-summary="verdict"]');
  private readonly picture = this.locatorFor('em-plan-slice-picture');
  private readonly canvas = this.locatorFor('em-plan-slice-picture canvas');
  private readonly caption = this.locatorFor('em-plan-slice-picture figcaption');

  async getPlanName(): Promise<string> {
    return squeeze(await (await this.name()).text());
  }

  /** The verdict in words with the count of its reasons. */
  async getVerdict(): Promise<string> {
    return squeeze(await (await this.verdictCell()).text());
  }

  async isOnEarlierInputs(): Promise<boolean> {
    return (await this.earlier()) !== null;
  }

  async getFigure(key: SummaryFigureKey): Promise<SummaryFigureContent> {
    const cell = await this.locatorFor(`[data-summary="${key}"]`)();
    const value = await this.locatorFor(`[data-summary="${key}"] .value`)();
    const note = await this.locatorForOptional(`[data-summary="${key}"] .note`)();
    return {
      value: squeeze(await value.text({ exclude: '.hidden-text, mat-icon' })),
      note: note ? squeeze(await note.text()) : '',
      isShort: await cell.hasClass('short'),
    };
  }

  /** `loading`, `drawn`, `failed` or `empty`. */
  async getPictureState(): Promise<string> {
    return (await (await this.picture()).getAttribute('data-picture-state')) ?? '';
  }

  /** What the picture shows in words (its label for screen readers). */
  async getPictureDescription(): Promise<string> {
    return (await (await this.canvas()).getAttribute('aria-label')) ?? '';
  }

  async getPictureCaption(): Promise<string> {
    return squeeze(await (await this.caption()).text());
  }
}
