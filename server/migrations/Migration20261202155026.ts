import { Migration } from '@mikro-orm/migrations';

export class Migration20261202155026 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "procedure_booking" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "kind" varchar(20) not null, "state" varchar(12) not null, "starts_at" timestamptz not null, "duration_min" int not null, "room" varchar(80) not null, "room_key" varchar(80) not null, "operator_id" uuid null, "anaesthesia" varchar(12) null, "modality" varchar(8) null, "applicators" jsonb not null, "notes" text null, "sequence" int not null, "booked_by_id" uuid not null, "checklist" jsonb not null, constraint "procedure_booking_pkey" primary key ("id"));`);
    this.addSql(`create index "procedure_booking_clinical_case_id_index" on "procedure_booking" ("clinical_case_id");`);
    this.addSql(`create index "procedure_booking_starts_at_index" on "procedure_booking" ("starts_at");`);
    this.addSql(`create unique index "procedure_booking_one_live" on "procedure_booking" ("clinical_case_id", "kind") where "state" in ('booked', 'confirmed');`);

    this.addSql(`create table "treatment_record" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "booking_id" uuid not null, "operator_id" uuid not null, "performed_at" timestamptz not null, "applicators_used" text not null, "deviation" text null, "complication_grade" varchar(8) not null, "complication_note" text null, "follow_up_proposed_at" timestamptz not null, "follow_up_due_notified_at" timestamptz null, constraint "treatment_record_pkey" primary key ("id"));`);
    this.addSql(`alter table "treatment_record" add constraint "treatment_record_clinical_case_id_unique" unique ("clinical_case_id");`);

    this.addSql(`create table "checklist_threshold" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "key" varchar(32) not null, "value" double precision not null, "unit" varchar(24) not null, "source" varchar(500) not null, "updated_by_id" uuid null, constraint "checklist_threshold_pkey" primary key ("id"));`);
    this.addSql(`alter table "checklist_threshold" add constraint "checklist_threshold_key_unique" unique ("key");`);

    this.addSql(`create table "booking_event" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "booking_id" uuid not null, "action" varchar(16) not null, "at" timestamptz not null, "by_id" uuid not null, "reason" text null, "changes" jsonb not null, constraint "booking_event_pkey" primary key ("id"));`);
    this.addSql(`create index "booking_event_booking_id_index" on "booking_event" ("booking_id");`);

    this.addSql(`alter table "procedure_booking" add constraint "procedure_booking_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "procedure_booking" add constraint "procedure_booking_operator_id_foreign" foreign key ("operator_id") references "app_user" ("id") on update cascade on delete set null;`);
    this.addSql(`alter table "procedure_booking" add constraint "procedure_booking_booked_by_id_foreign" foreign key ("booked_by_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "treatment_record" add constraint "treatment_record_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "treatment_record" add constraint "treatment_record_booking_id_foreign" foreign key ("booking_id") references "procedure_booking" ("id") on update cascade;`);
    this.addSql(`alter table "treatment_record" add constraint "treatment_record_operator_id_foreign" foreign key ("operator_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "checklist_threshold" add constraint "checklist_threshold_updated_by_id_foreign" foreign key ("updated_by_id") references "app_user" ("id") on update cascade on delete set null;`);

    this.addSql(`alter table "booking_event" add constraint "booking_event_booking_id_foreign" foreign key ("booking_id") references "procedure_booking" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "booking_event" add constraint "booking_event_by_id_foreign" foreign key ("by_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "decision" add column "urgency" varchar(12) not null default 'routine';`);

    // The checklist's default thresholds (server/src/modules/bookings/README.md, "Default
    // thresholds"); the same values as `defaultThresholds` in checklist-thresholds.ts.
    const sir =
      'SIR consensus guidelines on periprocedural management of thrombotic and bleeding risk, high-bleeding-risk procedures (Patel IJ et al., J Vasc Interv Radiol 2019;30:1168-1184)';
    const defaults: [string, number, string, string][] = [
      ['inr-max', 1.8, 'INR', `${sir}: correct the INR to within 1.5-1.8; the upper end is taken here. From memory: check against the publication and the local protocol.`],
      ['platelets-min', 50, '10^9/L', `${sir}: transfuse platelets below 50 x 10^9/L. From memory: check against the publication and the local protocol.`],
      ['lab-max-age-days', 14, 'days', 'Local practice (Emberline default, no publication): a panel taken within 14 days of the start. Set it to the local protocol.'],
      ['imaging-max-age-days', 30, 'days', 'Local practice (Emberline default, no publication): a series within 30 days of the start. Set it to the local protocol.'],
    ];
    const quote = (text: string) => `'${text.replace(/'/g, "''")}'`;
    for (const [key, value, unit, source] of defaults) {
      this.addSql(
        `insert into "checklist_threshold" ("id", "created_at", "updated_at", "key", "value", "unit", "source") values (gen_random_uuid(), now(), now(), ${quote(key)}, ${value}, ${quote(unit)}, ${quote(source)}) on conflict ("key") do nothing;`,
      );
    }
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "treatment_record" drop constraint "treatment_record_booking_id_foreign";`);

    this.addSql(`alter table "booking_event" drop constraint "booking_event_booking_id_foreign";`);

    this.addSql(`drop table if exists "procedure_booking" cascade;`);

    this.addSql(`drop table if exists "treatment_record" cascade;`);

    this.addSql(`drop table if exists "checklist_threshold" cascade;`);

    this.addSql(`drop table if exists "booking_event" cascade;`);

    this.addSql(`alter table "decision" drop column "urgency";`);
  }

}
