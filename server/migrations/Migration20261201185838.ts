import { Migration } from '@mikro-orm/migrations';

export class Migration20261201185838 extends Migration {

  override async up(): Promise<void> {
    this.addSql(`create table "audit_event" ("id" uuid not null, "at" timestamptz not null, "actor_id" uuid null, "actor_email" varchar(254) null, "action" varchar(40) not null, "entity_type" varchar(40) null, "entity_id" varchar(64) null, "ip" varchar(64) null, "outcome" varchar(10) not null, "detail" jsonb not null, constraint "audit_event_pkey" primary key ("id"));`);
    this.addSql(`create index "audit_event_actor_id_index" on "audit_event" ("actor_id");`);
    this.addSql(`create index "audit_event_action_index" on "audit_event" ("action");`);
    this.addSql(`create index "audit_event_entity_id_index" on "audit_event" ("entity_id");`);
    this.addSql(`create index "audit_event_at_index" on "audit_event" ("at");`);

    this.addSql(`create table "board" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "name" varchar(80) not null, "description" text not null default '', constraint "board_pkey" primary key ("id"));`);
    this.addSql(`alter table "board" add constraint "board_name_unique" unique ("name");`);

    this.addSql(`create table "http_session" ("sid" varchar not null, "sess" jsonb not null, "expire" timestamp(6) not null, constraint "http_session_pkey" primary key ("sid"));`);
    this.addSql(`create index "http_session_expire_index" on "http_session" ("expire");`);

    this.addSql(`create table "role_policy" ("role" varchar(40) not null, "requires_totp" boolean not null default false, "updated_at" timestamptz not null, constraint "role_policy_pkey" primary key ("role"));`);

    this.addSql(`create table "saml_assertion_seen" ("assertion_id" varchar(256) not null, "expires_at" timestamptz not null, constraint "saml_assertion_seen_pkey" primary key ("assertion_id"));`);
    this.addSql(`create index "saml_assertion_seen_expires_at_index" on "saml_assertion_seen" ("expires_at");`);

    this.addSql(`create table "saml_request" ("request_id" varchar(256) not null, "value" text not null, "created_at" timestamptz not null, constraint "saml_request_pkey" primary key ("request_id"));`);
    this.addSql(`create index "saml_request_created_at_index" on "saml_request" ("created_at");`);

    this.addSql(`create table "app_user" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "email" varchar(254) not null, "display_name" varchar(120) not null, "password_hash" text null, "roles" text[] not null, "is_active" boolean not null, "totp_secret" text null, "totp_enabled_at" timestamptz null, "saml_name_id" text null, "saml_issuer" text null, "last_sign_in_at" timestamptz null, constraint "app_user_pkey" primary key ("id"));`);
    this.addSql(`alter table "app_user" add constraint "app_user_email_unique" unique ("email");`);
    this.addSql(`create index "app_user_saml_name_id_index" on "app_user" ("saml_name_id");`);

    this.addSql(`create table "clinical_case" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "case_code" varchar(24) not null, "board_id" uuid not null, "presenter_id" uuid not null, "year_of_birth" smallint not null, "sex" varchar(16) not null, "primary_diagnosis" varchar(16) not null, "status" varchar(24) not null, "ecog_performance_status" smallint null, "has_vascular_invasion" boolean null, "has_extrahepatic_spread" boolean null, constraint "clinical_case_pkey" primary key ("id"));`);
    this.addSql(`alter table "clinical_case" add constraint "clinical_case_case_code_unique" unique ("case_code");`);
    this.addSql(`create index "clinical_case_board_id_index" on "clinical_case" ("board_id");`);
    this.addSql(`create index "clinical_case_status_index" on "clinical_case" ("status");`);

    this.addSql(`create table "lesion" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "segment" varchar(4) not null, "diameter_mm" double precision not null, "kind" varchar(24) not null, constraint "lesion_pkey" primary key ("id"));`);

    this.addSql(`create table "lab_panel" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "clinical_case_id" uuid not null, "taken_at" timestamptz not null, "bilirubin_value" double precision not null, "bilirubin_unit" varchar(8) not null, "albumin_value" double precision not null, "albumin_unit" varchar(8) not null, "inr" double precision not null, "creatinine_value" double precision not null, "creatinine_unit" varchar(8) not null, "sodium_mmol_l" double precision not null, "platelets_e9l" double precision not null, "ascites" varchar(16) not null, "encephalopathy" varchar(16) not null, "dialysis_twice_in_past_week" boolean not null, "entered_by_id" uuid not null, constraint "lab_panel_pkey" primary key ("id"));`);

    this.addSql(`create table "board_membership" ("id" uuid not null, "created_at" timestamptz not null, "updated_at" timestamptz not null, "board_id" uuid not null, "user_id" uuid not null, "specialty" varchar(40) not null, constraint "board_membership_pkey" primary key ("id"));`);
    this.addSql(`alter table "board_membership" add constraint "board_membership_board_id_user_id_unique" unique ("board_id", "user_id");`);

    this.addSql(`alter table "clinical_case" add constraint "clinical_case_board_id_foreign" foreign key ("board_id") references "board" ("id") on update cascade;`);
    this.addSql(`alter table "clinical_case" add constraint "clinical_case_presenter_id_foreign" foreign key ("presenter_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "lesion" add constraint "lesion_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);

    this.addSql(`alter table "lab_panel" add constraint "lab_panel_clinical_case_id_foreign" foreign key ("clinical_case_id") references "clinical_case" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "lab_panel" add constraint "lab_panel_entered_by_id_foreign" foreign key ("entered_by_id") references "app_user" ("id") on update cascade;`);

    this.addSql(`alter table "board_membership" add constraint "board_membership_board_id_foreign" foreign key ("board_id") references "board" ("id") on update cascade on delete cascade;`);
    this.addSql(`alter table "board_membership" add constraint "board_membership_user_id_foreign" foreign key ("user_id") references "app_user" ("id") on update cascade on delete cascade;`);
  }

}
