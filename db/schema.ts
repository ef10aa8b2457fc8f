// The database's shape for Kysely, written beside the migrations (one source of truth: when a
// migration changes a table, change its type here in the same commit).
import type { ColumnType, Generated, Insertable, Selectable, Updateable } from "kysely";

type Timestamp = ColumnType<Date, Date | string, Date | string>;
type CreatedAt = ColumnType<Date, Date | string | undefined, never>;
type UpdatedAt = ColumnType<Date, Date | string | undefined, Date | string>;

export type RoleName = "technician" | "officer" | "manager" | "admin";
export const ROLE_NAMES = ["technician", "officer", "manager", "admin"] as const satisfies readonly RoleName[];

export type SiteKind = "spring" | "river" | "tidal" | "reservoir" | "treatment-works" | "borehole" | "other";
export const SITE_KINDS = ["spring", "river", "tidal", "reservoir", "treatment-works", "borehole", "other"] as const satisfies readonly SiteKind[];

export type CompensationMethodName = "linear" | "natural-water";

export interface RoleTable {
  name: RoleName;
  label: string;
  description: string;
  rank: number;
}

export interface PersonTable {
  id: Generated<string>;
  email: string;
  name: string;
  role: RoleName;
  password_hash: string | null;
  weekly_digest: Generated<boolean>;
  disabled_at: Timestamp | null;
  created_at: CreatedAt;
  updated_at: UpdatedAt;
}

export interface SessionTable {
  id: string;
  person_id: string;
  created_at: CreatedAt;
  expires_at: Timestamp;
  revoked_at: Timestamp | null;
  user_agent: string | null;
}

export interface PasswordTokenTable {
  token_hash: string;
  person_id: string;
  purpose: "reset" | "invite";
  created_at: CreatedAt;
  expires_at: Timestamp;
  used_at: Timestamp | null;
}

export interface SignInFailureTable {
  id: Generated<string>;
  email: string;
  at: CreatedAt;
}

export interface SiteTable {
  id: Generated<string>;
  code: string;
  name: string;
  kind: SiteKind;
  latitude: number;
  longitude: number;
  time_zone: Generated<string>;
  notes: Generated<string>;
  compensation_method: Generated<CompensationMethodName>;
  alpha_per_c: Generated<number>;
  reference_c: Generated<number>;
  tds_factor: Generated<number>;
  settings_version: Generated<number>;
  created_at: CreatedAt;
  updated_at: UpdatedAt;
}

export interface LoggerTable {
  id: Generated<string>;
  serial: string;
  model: Generated<string>;
  logging_interval_s: Generated<number>;
  notes: Generated<string>;
  created_at: CreatedAt;
}

export interface LoggerDeploymentTable {
  id: Generated<string>;
  logger_id: string;
  site_id: string;
  deployed_from: Timestamp;
  deployed_until: Timestamp | null;
}

export interface SiteAssignmentTable {
  person_id: string;
  site_id: string;
}

export interface AuditEventTable {
  id: Generated<string>;
  at: CreatedAt;
  person_id: string | null;
  entity: string;
  entity_id: string;
  action: string;
  before: unknown | null;
  after: unknown | null;
  reason: string | null;
}

export interface DB extends IngestTables, LabTables, ThresholdTables, AlertTables, SummaryTables, VisitTables {
  role: RoleTable;
  person: PersonTable;
  session: SessionTable;
  password_token: PasswordTokenTable;
  sign_in_failure: SignInFailureTable;
  site: SiteTable;
  logger: LoggerTable;
  logger_deployment: LoggerDeploymentTable;
  site_assignment: SiteAssignmentTable;
  audit_event: AuditEventTable;
}

export type Person = Selectable<PersonTable>;
export type NewPerson = Insertable<PersonTable>;
export type PersonUpdate = Updateable<PersonTable>;
export type Site = Selectable<SiteTable>;
export type NewSite = Insertable<SiteTable>;
export type Logger = Selectable<LoggerTable>;

// ---- ingest (0002) ----
export type UploadStatus = "awaiting-file" | "queued" | "processing" | "done" | "failed" | "duplicate";

export interface ImportProfileTable {
  id: Generated<string>;
  name: string;
  header_signature: string;
  settings: ColumnType<unknown, string, string>;
  created_by: string | null;
  created_at: CreatedAt;
  updated_at: UpdatedAt;
}

export interface DerivationSettingsTable {
  id: Generated<number>;
  site_id: string;
  compensation_method: CompensationMethodName;
  alpha_per_c: number;
  reference_c: number;
  tds_factor: number;
  created_at: CreatedAt;
  created_by: string | null;
}

export interface UploadTable {
  id: Generated<string>;
  object_key: string;
  file_name: string;
  size_bytes: number;
  content_type: string;
  sha256: string;
  site_id: string;
  logger_id: string;
  profile_id: string | null;
  uploaded_by: string | null;
  status: Generated<UploadStatus>;
  duplicate_of: string | null;
  message: string | null;
  rows_total: Generated<number>;
  rows_accepted: Generated<number>;
  rows_rejected: Generated<number>;
  rows_duplicate: Generated<number>;
  bytes_processed: Generated<number>;
  first_reading_at: Timestamp | null;
  last_reading_at: Timestamp | null;
  attempts: Generated<number>;
  created_at: CreatedAt;
  confirmed_at: Timestamp | null;
  started_at: Timestamp | null;
  finished_at: Timestamp | null;
}

export interface UploadErrorTable {
  upload_id: string;
  row_number: number;
  column_name: string;
  raw_value: string;
  reason: string;
}

export interface ReadingsTable {
  site_id: string;
  logger_id: string;
  time: Timestamp;
  upload_id: string;
  row_number: number;
  conductivity_us_cm: number | null;
  logger_sc_us_cm: number | null;
  temperature_c: number | null;
  ph: number | null;
  depth_m: number | null;
  battery_v: number | null;
  sc25_us_cm: number | null;
  tds_mg_l: number | null;
  salinity_psu: number | null;
  settings_id: number | null;
  quality_flag: string | null;
  /** Specific conductance as compensated, before any correction (0005). */
  sc25_uncorrected_us_cm: number | null;
  /** Correction applied to specific conductance, µS/cm; null when none (0005). */
  correction_us_cm: number | null;
}

export interface IngestTables {
  import_profile: ImportProfileTable;
  derivation_settings: DerivationSettingsTable;
  upload: UploadTable;
  upload_error: UploadErrorTable;
  readings: ReadingsTable;
}

// ---- lab samples (0003) ----
export type LabVerdict = "pass" | "warn" | "fail";

export interface LabSampleTable {
  id: Generated<string>;
  site_id: string;
  sampled_at: Timestamp;
  lab_reference: string | null;
  /** Ion name (as in app/lib/water/ions.ts) → mg/L, only the ions the laboratory reported. */
  ions_mg_l: ColumnType<Record<string, number>, string, string>;
  measured_ec_us_cm: number | null;
  measured_tds_mg_l: number | null;
  ph: number | null;
  silica_mg_l: number | null;
  notes: Generated<string>;
  calculated_ec_us_cm: number;
  calculated_tds_mg_l: number;
  ec_ratio: number | null;
  ion_balance_percent: number;
  /** The labCheck() output when the sample was entered or last edited. */
  results: ColumnType<unknown, string, string>;
  verdict: LabVerdict;
  entered_by: string | null;
  created_at: CreatedAt;
  updated_at: UpdatedAt;
}

export interface LabTables {
  lab_sample: LabSampleTable;
}

// ---- site display thresholds (0004) ----
export type ThresholdParameterName = "sc25" | "temperature" | "tds" | "salinity" | "ph" | "depth";

export interface SiteThresholdTable {
  site_id: string;
  parameter: ThresholdParameterName;
  bound: "upper" | "lower";
  value: number;
  updated_at: UpdatedAt;
  updated_by: string | null;
}

export interface ThresholdTables {
  site_threshold: SiteThresholdTable;
}

// ---- field visits, calibration checks, corrections, periods of record (0007) ----
export type CorrectionKindName = "fouling" | "drift" | "other";
export type CorrectionStatus = "proposed" | "approved" | "rejected";
export type OffsetUnitName = "us_cm" | "percent";
export type GradeName = "excellent" | "good" | "fair" | "poor" | "beyond-limit";
export type StandardName = "1413" | "12.88" | "146.9" | "custom";

export interface FieldVisitTable {
  id: Generated<string>;
  site_id: string;
  logger_id: string;
  visited_at: Timestamp;
  technician_id: string | null;
  before_sc_us_cm: number | null;
  before_temperature_c: number | null;
  after_sc_us_cm: number | null;
  after_temperature_c: number | null;
  meter_sc_us_cm: number | null;
  meter_temperature_c: number | null;
  fouling_error_us_cm: number | null;
  fouling_error_percent: number | null;
  fouling_passed: boolean | null;
  temperature_error_c: number | null;
  temperature_passed: boolean | null;
  recalibrated: Generated<boolean>;
  notes: Generated<string>;
  photo_keys: ColumnType<string[], string[] | undefined, string[]>;
  created_by: string | null;
  updated_by: string | null;
  created_at: CreatedAt;
  updated_at: UpdatedAt;
}

export interface CalibrationCheckTable {
  id: Generated<string>;
  visit_id: string;
  position: number;
  standard: StandardName;
  custom_value_us_cm: number | null;
  standard_temperature_c: number;
  sensor_us_cm: number;
  expected_us_cm: number;
  error_us_cm: number;
  error_percent: number;
  allowance_us_cm: number;
  passed: boolean;
  cell_constant_change_percent: number;
}

export interface CorrectionTable {
  id: Generated<string>;
  site_id: string;
  logger_id: string;
  kind: CorrectionKindName;
  from_visit_id: string | null;
  to_visit_id: string | null;
  period_start: Timestamp;
  period_end: Timestamp;
  offset_unit: OffsetUnitName;
  start_offset: Generated<number>;
  end_offset: number;
  status: Generated<CorrectionStatus>;
  /** Null: proposed by Ripplemark from two visits. */
  author_id: string | null;
  reason: Generated<string>;
  approved_by: string | null;
  approved_at: Timestamp | null;
  updated_by: string | null;
  created_at: CreatedAt;
  updated_at: UpdatedAt;
}

export interface RecordPeriodTable {
  id: Generated<string>;
  site_id: string;
  logger_id: string;
  from_visit_id: string | null;
  to_visit_id: string | null;
  period_start: Timestamp;
  period_end: Timestamp;
  grade: GradeName | null;
  total_correction_percent: number | null;
  approved_by: string | null;
  approved_at: Timestamp | null;
  locked: Generated<boolean>;
  updated_at: UpdatedAt;
}

export interface RecordAuditTable {
  id: Generated<string>;
  at: CreatedAt;
  person_id: string | null;
  site_id: string;
  entity: "field_visit" | "correction" | "record_period";
  entity_id: string;
  action: string;
  before: ColumnType<unknown, string | null, string | null>;
  after: ColumnType<unknown, string | null, string | null>;
  reason: string | null;
  in_locked_period: Generated<boolean>;
}

export interface VisitTables {
  field_visit: FieldVisitTable;
  calibration_check: CalibrationCheckTable;
  correction: CorrectionTable;
  record_period: RecordPeriodTable;
  record_audit: RecordAuditTable;
}

// ---- alert rules, exceedances, notifications, alert e-mail (0006) ----
export type AlertParameterName = "sc25" | "conductivity" | "temperature" | "tds" | "salinity" | "ph" | "depth" | "battery";
export type AlertConditionName =
  | "above"
  | "below"
  | "rate-of-change"
  | "flat-line"
  | "spike"
  | "out-of-range"
  | "temperature-range"
  | "missing-data";
export type ExceedanceStatus = "open" | "closed" | "withdrawn";
export type ExceedanceOutcome = "water-quality" | "sensor-fault" | "calibration" | "field-work" | "undetermined";
export type EmailSendStatus = "queued" | "sent" | "failed" | "held" | "summarised";

export interface AlertRuleTable {
  id: Generated<string>;
  name: string;
  parameter: AlertParameterName;
  condition: AlertConditionName;
  /** The condition's settings in canonical units (see app/lib/quality/alert-rules.ts). */
  params: ColumnType<unknown, string, string>;
  /** Listed sites; null = not limited to a list. */
  site_ids: string[] | null;
  /** Every site of these kinds; null = not limited by kind. Both null = every site. */
  site_kinds: SiteKind[] | null;
  notify_roles: ColumnType<RoleName[], RoleName[] | undefined, RoleName[]>;
  email: Generated<boolean>;
  emails_per_hour: Generated<number>;
  enabled: Generated<boolean>;
  guideline_source: Generated<string>;
  default_key: string | null;
  created_at: CreatedAt;
  updated_at: UpdatedAt;
  updated_by: string | null;
}

export interface ExceedanceTable {
  id: Generated<string>;
  rule_id: string;
  site_id: string;
  parameter: AlertParameterName;
  condition: AlertConditionName;
  started_at: Timestamp;
  /** Null: still going on at the latest reading. */
  ended_at: Timestamp | null;
  last_reading_at: Timestamp;
  duration_s: Generated<number>;
  peak_value: number;
  peak_at: Timestamp;
  threshold_value: number | null;
  clear_value: number | null;
  status: Generated<ExceedanceStatus>;
  /** Null until an officer classifies the event. */
  outcome: ExceedanceOutcome | null;
  comment: Generated<string>;
  readings_flagged: Generated<number>;
  detected_at: CreatedAt;
  updated_at: UpdatedAt;
  closed_by: string | null;
  closed_at: Timestamp | null;
}

/** One version of an alert rule (migration 0010: written by a trigger on alert_rule). */
export interface AlertRuleChangeTable {
  id: Generated<number>;
  rule_id: string;
  /** Who saved it (the rule's updated_by); null for the default rules Ripplemark creates. */
  person_id: string | null;
  at: Timestamp;
  action: "created" | "changed";
  /** The whole rule row as JSON; null when created. */
  before: ColumnType<unknown, string | null, string | null>;
  after: ColumnType<unknown, string, string>;
}

export interface ExceedanceAuditTable {
  id: Generated<number>;
  exceedance_id: string;
  /** Null: Ripplemark's detection. */
  person_id: string | null;
  at: CreatedAt;
  action: string;
  before: ColumnType<unknown, string | null, string | null>;
  after: ColumnType<unknown, string | null, string | null>;
}

export interface NotificationTable {
  id: Generated<number>;
  person_id: string;
  exceedance_id: string;
  created_at: CreatedAt;
  read_at: Timestamp | null;
}

export interface EmailSendTable {
  id: Generated<string>;
  rule_id: string;
  exceedance_id: string | null;
  kind: "event" | "summary";
  status: EmailSendStatus;
  summary_id: string | null;
  attempts: Generated<number>;
  last_error: string | null;
  recipients: ColumnType<string[], string[] | undefined, string[]>;
  message_id: string | null;
  created_at: CreatedAt;
  sent_at: Timestamp | null;
}

export interface AlertTables {
  alert_rule: AlertRuleTable;
  alert_rule_change: AlertRuleChangeTable;
  exceedance: ExceedanceTable;
  exceedance_audit: ExceedanceAuditTable;
  notification: NotificationTable;
  email_send: EmailSendTable;
}

// ---- weekly summaries and digest deliveries (0008) ----
export type ThresholdShare = { parameter: ThresholdParameterName; bound: "upper" | "lower"; value: number; share: number | null };

export interface WeeklySummaryTable {
  site_id: string;
  /** The local Monday starting the ISO week. Select it as `week_start::text` ("YYYY-MM-DD"): pg turns a bare date into a Date at local midnight. */
  week_start: ColumnType<string, string, string>;
  iso_year: number;
  iso_week: number;
  starts_at: Timestamp;
  ends_at: Timestamp;
  readings: Generated<number>;
  readings_excluded: Generated<number>;
  readings_expected: number | null;
  completeness: number | null;
  sc25_count: Generated<number>;
  sc25_min: number | null;
  sc25_mean: number | null;
  sc25_median: number | null;
  sc25_p95: number | null;
  sc25_max: number | null;
  tds_count: Generated<number>;
  tds_min: number | null;
  tds_mean: number | null;
  tds_median: number | null;
  tds_p95: number | null;
  tds_max: number | null;
  temperature_mean: number | null;
  thresholds: ColumnType<ThresholdShare[], string | undefined, string>;
  sc25_above_share: number | null;
  daily_sc25_medians: ColumnType<(number | null)[], string | undefined, string>;
  events: ColumnType<Record<string, number>, string | undefined, string>;
  events_total: Generated<number>;
  grade: string | null;
  approved: boolean | null;
  computed_at: CreatedAt;
}

export interface WeeklyDigestDeliveryTable {
  person_id: string;
  week_start: ColumnType<string, string, string>;
  claimed_at: CreatedAt;
  sent_at: Timestamp | null;
  message_id: string | null;
}

export interface SummaryTables {
  weekly_summary: WeeklySummaryTable;
  weekly_digest_delivery: WeeklyDigestDeliveryTable;
}
