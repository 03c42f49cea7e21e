import { ComponentHarness, HarnessPredicate, type BaseHarnessFilters } from '@angular/cdk/testing';
import {
  ComparisonGroupHarness,
  ComparisonRowHarness,
  type ComparisonGroupHarnessFilters,
  type ComparisonRowHarnessFilters,
} from './comparison-table-harnesses';
import { SummaryLineHarness, type SummaryLineHarnessFilters } from './summary-line-harness';

export * from './comparison-table-harnesses';
export * from './summary-line-harness';

/** Filters for the plan comparison. */
export interface PlanComparisonHarnessFilters extends BaseHarnessFilters {
  /** Only a comparison with a column for this plan (its name, or a pattern). */
  comparedPlan?: string | RegExp;
}

/** A plan not (yet) in the comparison, with the reason. */
export interface PendingPlanContent {
  name: string;
  reason: string;
}

/** The parts of the comparison, as they follow each other on the page. */
export type ComparisonPart = 'caution' | 'summary' | 'table' | 'pending';

const squeeze = (text: string) => text.replace(/\s+/g, ' ').trim();

const partSelectors: Record<ComparisonPart, string> = {
  caution: 'em-clinical-caution',
  summary: 'em-comparison-summary-band',
  table: 'table.comparison',
  pending: '.pending',
};

/**
 * Test harness of `em-plan-comparison`: reads the comparison as its reader does (the plans
 * compared, the summary band, the table's groups and rows, the plans left out) and works its
 * controls, so that tests do not depend on its markup.
 */
export class PlanComparisonHarness extends ComponentHarness {
  static hostSelector = 'em-plan-comparison';

  static with(options: PlanComparisonHarnessFilters = {}): HarnessPredicate<PlanComparisonHarness> {
    return new HarnessPredicate(PlanComparisonHarness, options).addOption(
      'comparedPlan',
      options.comparedPlan,
      async (harness, name) => {
        const names = await harness.getComparedPlanNames();
        const matches = await Promise.all(
          names.map((candidate) => HarnessPredicate.stringMatches(candidate, name)),
        );
        return matches.includes(true);
      },
    );
  }

  private readonly caution = this.locatorForOptional('em-clinical-caution');
  private readonly planNames = this.locatorForAll('thead th[data-compared-plan] .plan-name');
  private readonly pendingItems = this.locatorForAll('.pending li[data-pending-plan]');
  private readonly pendingNames = this.locatorForAll('.pending li[data-pending-plan] .plan-name');
  private readonly pendingReasons = this.locatorForAll('.pending li[data-pending-plan] .reason');
  private readonly parts = this.locatorForAll(Object.values(partSelectors).join(', '));

  /** The compared plans' names, in column order. */
  async getComparedPlanNames(): Promise<string[]> {
    return Promise.all((await this.planNames()).map(async (name) => squeeze(await name.text())));
  }

  async getCautionText(): Promise<string> {
    const caution = await this.caution();
    return caution ? squeeze(await caution.text()) : '';
  }

  /** Which parts show, in their order on the page. */
  async getPartsInOrder(): Promise<ComparisonPart[]> {
    const found: ComparisonPart[] = [];
    for (const element of await this.parts()) {
      for (const [part, selector] of Object.entries(partSelectors) as [ComparisonPart, string][]) {
        if (await element.matchesSelector(selector)) found.push(part);
      }
    }
    return found;
  }

  async getSummaryLines(filters: SummaryLineHarnessFilters = {}): Promise<SummaryLineHarness[]> {
    return this.locatorForAll(SummaryLineHarness.with(filters))();
  }

  async getSummaryLine(filters: SummaryLineHarnessFilters): Promise<SummaryLineHarness> {
    return this.locatorFor(SummaryLineHarness.with(filters))();
  }

  async getGroups(filters: ComparisonGroupHarnessFilters = {}): Promise<ComparisonGroupHarness[]> {
    return this.locatorForAll(ComparisonGroupHarness.with(filters))();
  }

  async getGroup(filters: ComparisonGroupHarnessFilters): Promise<ComparisonGroupHarness> {
    return this.locatorFor(ComparisonGroupHarness.with(filters))();
  }

  async getRows(filters: ComparisonRowHarnessFilters = {}): Promise<ComparisonRowHarness[]> {
    return this.locatorForAll(ComparisonRowHarness.with(filters))();
  }

  /** The one row matching the filters; fails when there is none. */
  async getRow(filters: ComparisonRowHarnessFilters): Promise<ComparisonRowHarness> {
    return this.locatorFor(ComparisonRowHarness.with(filters))();
  }

  async hasRow(filters: ComparisonRowHarnessFilters): Promise<boolean> {
    return (await this.locatorForOptional(ComparisonRowHarness.with(filters))()) !== null;
  }

  async getPendingPlans(): Promise<PendingPlanContent[]> {
    const items = await this.pendingItems();
    const names = await this.pendingNames();
    const reasons = await this.pendingReasons();
    return Promise.all(
      items.map(async (_item, index) => ({
        name: squeeze(await names[index].text()),
        reason: squeeze(await reasons[index].text()),
      })),
    );
  }

  async unfoldAllGroups(): Promise<void> {
    await this.clickButton('Unfold all groups');
  }

  async foldAllGroups(): Promise<void> {
    await this.clickButton('Fold all groups');
  }

  private async clickButton(label: string): Promise<void> {
    const buttons = await this.locatorForAll('button')();
    for (const button of buttons) {
      if ((await button.text({ exclude: 'mat-icon' })).trim() === label) {
        await button.click();
        return;
      }
    }
    throw new Error(`No button "${label}" in the plan comparison`);
  }
}
