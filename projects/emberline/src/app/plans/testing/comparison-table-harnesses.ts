import { ComponentHarness, HarnessPredicate, type BaseHarnessFilters } from '@angular/cdk/testing';

/** Filters for a row of the comparison table. */
export interface ComparisonRowHarnessFilters extends BaseHarnessFilters {
  /** The row's key: `path-length`, `clearance-portal-vein`, `margin-<tumour id>`, `verdict` … */
  key?: string;
  /** The key of the group the row sits in: `verdict`, `applicator-0`, `inputs` … */
  group?: string;
  /** The row's label (its unit included), or a pattern it matches. */
  label?: string | RegExp;
}

/** Filters for a group (a foldable block of rows) of the comparison table. */
export interface ComparisonGroupHarnessFilters extends BaseHarnessFilters {
  key?: string;
  title?: string | RegExp;
}

/** One cell of a row as a reader sees it. */
export interface ComparisonCellContent {
  /** The cell's text, white space folded. */
  text: string;
  /** Marked as the better value of a ranked row (by a sign and in words). */
  isBest: boolean;
}

const squeeze = (text: string) => text.replace(/\s+/g, ' ').trim();

/** A row of the plan comparison's table: a figure across the compared plans. */
export class ComparisonRowHarness extends ComponentHarness {
  static hostSelector = 'tr[data-row]';

  static with(options: ComparisonRowHarnessFilters = {}): HarnessPredicate<ComparisonRowHarness> {
    return new HarnessPredicate(ComparisonRowHarness, options)
      .addOption('key', options.key, async (harness, key) => (await harness.getKey()) === key)
      .addOption(
        'group',
        options.group,
        async (harness, group) => (await harness.getGroup()) === group,
      )
      .addOption('label', options.label, (harness, label) =>
        HarnessPredicate.stringMatches(harness.getLabel(), label),
      );
  }

  private readonly header = this.locatorFor('th[scope="row"]');
  private readonly direction = this.locatorForOptional('.direction');
  private readonly cellElements = this.locatorForAll('td');

  async getKey(): Promise<string> {
    return (await (await this.host()).getAttribute('data-row')) ?? '';
  }

  async getGroup(): Promise<string> {
    return (await (await this.host()).getAttribute('data-row-group')) ?? '';
  }

  /** The label with its unit, without the ranking words. */
  async getLabel(): Promise<string> {
    return squeeze(await (await this.header()).text({ exclude: '.direction' }));
  }

  /** "Greater is better", "Smaller is better", or empty for a row that is not ranked. */
  async getDirection(): Promise<string> {
    const direction = await this.direction();
    return direction ? squeeze(await direction.text()) : '';
  }

  /** The cells in column order. */
  async getCells(): Promise<ComparisonCellContent[]> {
    const cells = await this.cellElements();
    return Promise.all(
      cells.map(async (cell) => ({
        // Icons are ligature words ("star"): the reader sees a sign, the harness reads words.
        text: squeeze(await cell.text({ exclude: 'mat-icon' })),
        isBest: await cell.hasClass('best'),
      })),
    );
  }

  async getCellTexts(): Promise<string[]> {
    return (await this.getCells()).map((cell) => cell.text);
  }

  /** Column indexes marked as holding the better value. */
  async getBestColumns(): Promise<number[]> {
    return (await this.getCells()).flatMap((cell, index) => (cell.isBest ? [index] : []));
  }
}

/** A group of the comparison's table: a heading that folds and unfolds its rows. */
export class ComparisonGroupHarness extends ComponentHarness {
  static hostSelector = 'tbody[data-group]';

  static with(
    options: ComparisonGroupHarnessFilters = {},
  ): HarnessPredicate<ComparisonGroupHarness> {
    return new HarnessPredicate(ComparisonGroupHarness, options)
      .addOption('key', options.key, async (harness, key) => (await harness.getKey()) === key)
      .addOption('title', options.title, (harness, title) =>
        HarnessPredicate.stringMatches(harness.getTitle(), title),
      );
  }

  private readonly toggleButton = this.locatorFor('button.group-toggle');
  private readonly titleElement = this.locatorFor('.group-title');
  private readonly cautionRow = this.locatorForOptional('tr[data-group-caution]');

  async getKey(): Promise<string> {
    return (await (await this.host()).getAttribute('data-group')) ?? '';
  }

  async getTitle(): Promise<string> {
    return squeeze(await (await this.titleElement()).text());
  }

  /** Whether the rows show (the toggle's `aria-expanded`, what a screen reader announces). */
  /** The caution the group carries under its heading (the rehearsal's), or empty. */
  async getCautionText(): Promise<string> {
    const row = await this.cautionRow();
    return row ? squeeze(await row.text({ exclude: 'mat-icon' })) : '';
  }

  async isExpanded(): Promise<boolean> {
    return (await (await this.toggleButton()).getAttribute('aria-expanded')) === 'true';
  }

  /** The rows hide behind a folded heading: the row elements stay, undisplayed on screen. */
  async isFolded(): Promise<boolean> {
    return (await this.host()).hasClass('folded');
  }

  async toggle(): Promise<void> {
    await (await this.toggleButton()).click();
  }

  async getRows(filters: ComparisonRowHarnessFilters = {}): Promise<ComparisonRowHarness[]> {
    return this.locatorForAll(ComparisonRowHarness.with(filters))();
  }
}
