import { Migration } from '@mikro-orm/migrations';

export class Migration20261202085355 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`alter table "safety_profile" add column "rehearsal_tolerance_mm" double precision not null default 2, add column "rehearsal_tolerance_source" text not null default '';`);

    // Profiles written before the rehearsal get its default tolerance with its source.
    this.addSql(
      `update "safety_profile" set "rehearsal_tolerance_source" = 'Common practice: robot-assisted needle placement aims at a tip within about 2 mm of the target; the rehearsal is a simulation estimate, review per device and team.' where "rehearsal_tolerance_source" = '';`,
    );

    this.addSql(`alter table "clinical_case" add column "rehearsal" jsonb null;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "clinical_case" drop column "rehearsal";`);

    this.addSql(`alter table "safety_profile" drop column "rehearsal_tolerance_mm", drop column "rehearsal_tolerance_source";`);
  }

}
