import { MigrationInterface, QueryRunner } from 'typeorm';

/** The value columns of a reading: a change to any of them is a new version. */
const VALUES = ['result', 'hfe', 'hfe_ic_a', 'hfe_vce_v', 'icbo_a', 'icbo_vcb_v', 'vcesat_v', 'bvceo_v', 'measured_c', 'measured_at'];
const COPIED = [...VALUES, 'late', 'upload_id', 'entered_by_id'];
const tuple = (prefix: string) => `(${VALUES.map((c) => `${prefix}.${c}`).join(', ')})`;

/**
 * Append-only measurements and kept upload files (issue #21 items 1 and 2).
 *
 * `measurements` stays the one row per (run, device, read point) that every reader of "the current
 * reading" reads; triggers make it the latest of a chain of versions: a change of a value raises
 * `version` (BEFORE UPDATE) and every version — the first entry and each correction with its
 * reason, person and deviation — is copied into `measurement_versions` (AFTER INSERT OR UPDATE),
 * whatever wrote it (API, seed, or SQL by hand). `measurement_versions` refuses UPDATE and
 * DELETE (only the cascade of a deleted run may remove rows), and a reading itself can only go with
 * its run. Existing readings become their own version 1.
 *
 * `measurement_files` keeps the bytes of each uploaded file by SHA-256 (in PostgreSQL so the file
 * commits with its upload row and any database backup carries it).
 */
export class AppendOnlyMeasurements1817000000000 implements MigrationInterface {
  name = 'AppendOnlyMeasurements1817000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "measurements" ADD "version" integer NOT NULL DEFAULT 1`);
    await q.query(`ALTER TABLE "measurements" ADD "change_reason" text`);
    await q.query(`ALTER TABLE "measurements" ADD "deviation" text`);
    await q.query(
      `CREATE TABLE "measurement_versions" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "measurement_id" uuid NOT NULL, "run_id" uuid NOT NULL, "device_id" uuid NOT NULL, "read_point_h" double precision NOT NULL, "version" integer NOT NULL, "result" character varying(12) NOT NULL, "hfe" double precision, "hfe_ic_a" double precision, "hfe_vce_v" double precision, "icbo_a" double precision, "icbo_vcb_v" double precision, "vcesat_v" double precision, "bvceo_v" double precision, "measured_c" double precision NOT NULL, "measured_at" TIMESTAMP WITH TIME ZONE NOT NULL, "late" boolean NOT NULL, "upload_id" uuid, "entered_by_id" uuid, "reason" text, "deviation" text, "recorded_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_f52adb666c8cf6188b55bbcbaa1" PRIMARY KEY ("id"))`,
    );
    await q.query(`CREATE UNIQUE INDEX "IDX_39a151604e3297e1c9f687d83d" ON "measurement_versions" ("measurement_id", "version") `);
    await q.query(`CREATE INDEX "IDX_18a38510c0e2832137ead9d254" ON "measurement_versions" ("run_id", "device_id") `);
    await q.query(
      `ALTER TABLE "measurement_versions" ADD CONSTRAINT "FK_367a3919eecb80264458bb8975d" FOREIGN KEY ("measurement_id") REFERENCES "measurements"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await q.query(
      `CREATE TABLE "measurement_files" ("sha256" character(64) NOT NULL, "content" bytea NOT NULL, "size_bytes" integer NOT NULL, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_1f44174aeaed1d17f1e6d3d34c0" PRIMARY KEY ("sha256"))`,
    );
    await q.query(`INSERT INTO "measurement_versions" ("measurement_id", "run_id", "device_id", "read_point_h", "version", ${COPIED.map((c) => `"${c}"`).join(', ')}, "recorded_at")
      SELECT m."id", m."run_id", m."device_id", m."read_point_h", 1, ${COPIED.map((c) => `m."${c}"`).join(', ')}, m."created_at" FROM "measurements" m`);

    await q.query(`CREATE FUNCTION measurement_version_bump() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF ${tuple('NEW')} IS DISTINCT FROM ${tuple('OLD')} THEN
    NEW.version := OLD.version + 1;
  ELSE
    -- Nothing of the reading changed (a flag, a confirmation, the late mark): same version, same note.
    NEW.version := OLD.version;
    NEW.change_reason := OLD.change_reason;
    NEW.deviation := OLD.deviation;
    NEW.entered_by_id := OLD.entered_by_id;
    NEW.upload_id := OLD.upload_id;
  END IF;
  RETURN NEW;
END $$`);
    await q.query(
      `CREATE TRIGGER measurements_version_bump BEFORE UPDATE ON "measurements" FOR EACH ROW EXECUTE FUNCTION measurement_version_bump()`,
    );
    await q.query(`CREATE FUNCTION measurement_version_copy() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'INSERT' OR NEW.version <> OLD.version THEN
    INSERT INTO measurement_versions (measurement_id, run_id, device_id, read_point_h, version, ${COPIED.join(', ')}, reason, deviation)
    VALUES (NEW.id, NEW.run_id, NEW.device_id, NEW.read_point_h, NEW.version, ${COPIED.map((c) => `NEW.${c}`).join(', ')}, NEW.change_reason, NEW.deviation);
  END IF;
  RETURN NULL;
END $$`);
    await q.query(
      `CREATE TRIGGER measurements_version_copy AFTER INSERT OR UPDATE ON "measurements" FOR EACH ROW EXECUTE FUNCTION measurement_version_copy()`,
    );
    // pg_trigger_depth() > 1: the delete comes from a foreign key's cascade (a run removed as a whole).
    await q.query(`CREATE FUNCTION measurement_records_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' AND pg_trigger_depth() > 1 THEN
    RETURN OLD;
  END IF;
  RAISE EXCEPTION '% is append-only: a stored reading and its earlier versions cannot be % (correct a reading with a new version instead)',
    TG_TABLE_NAME, CASE TG_OP WHEN 'DELETE' THEN 'deleted' ELSE 'changed' END
    USING ERRCODE = 'P0001';
END $$`);
    await q.query(
      `CREATE TRIGGER measurement_versions_append_only BEFORE UPDATE OR DELETE ON "measurement_versions" FOR EACH ROW EXECUTE FUNCTION measurement_records_append_only()`,
    );
    await q.query(
      `CREATE TRIGGER measurements_no_delete BEFORE DELETE ON "measurements" FOR EACH ROW EXECUTE FUNCTION measurement_records_append_only()`,
    );
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TRIGGER "measurements_no_delete" ON "measurements"`);
    await q.query(`DROP TRIGGER "measurement_versions_append_only" ON "measurement_versions"`);
    await q.query(`DROP TRIGGER "measurements_version_copy" ON "measurements"`);
    await q.query(`DROP TRIGGER "measurements_version_bump" ON "measurements"`);
    await q.query(`DROP FUNCTION measurement_records_append_only()`);
    await q.query(`DROP FUNCTION measurement_version_copy()`);
    await q.query(`DROP FUNCTION measurement_version_bump()`);
    await q.query(`DROP TABLE "measurement_files"`);
    await q.query(`ALTER TABLE "measurement_versions" DROP CONSTRAINT "FK_367a3919eecb80264458bb8975d"`);
    await q.query(`DROP INDEX "public"."IDX_18a38510c0e2832137ead9d254"`);
    await q.query(`DROP INDEX "public"."IDX_39a151604e3297e1c9f687d83d"`);
    await q.query(`DROP TABLE "measurement_versions"`);
    await q.query(`ALTER TABLE "measurements" DROP COLUMN "deviation"`);
    await q.query(`ALTER TABLE "measurements" DROP COLUMN "change_reason"`);
    await q.query(`ALTER TABLE "measurements" DROP COLUMN "version"`);
  }
}
