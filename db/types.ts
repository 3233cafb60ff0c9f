import type { ColumnType, Generated, Insertable, Selectable, Updateable } from "kysely";
import type { Role } from "../lib/auth/roles";
import type { StoredCurveSpec, StoredRenderFilter } from "../lib/validation/records";

type Timestamp = ColumnType<Date, Date | string, Date | string>;
/** A timestamp the database fills in by default. */
type DefaultTimestamp = ColumnType<Date, Date | string | undefined, Date | string>;

export interface UsersTable {
  id: Generated<string>;
  email: string;
  name: string;
  role: Role;
  password_hash: string;
  active: Generated<boolean>;
  /** Moves on when the person's sessions must end; a session cookie carries the version it began under. */
  session_version: Generated<number>;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
}

export interface InvitationsTable {
  id: Generated<string>;
  email: string;
  role: Role;
  token_hash: string;
  invited_by: string;
  expires_at: Timestamp;
  accepted_at: Timestamp | null;
  accepted_user_id: string | null;
  revoked_at: Timestamp | null;
  created_at: DefaultTimestamp;
}

export interface PasswordResetsTable {
  id: Generated<string>;
  user_id: string;
  token_hash: string;
  expires_at: Timestamp;
  used_at: Timestamp | null;
  created_at: DefaultTimestamp;
}

export interface SignInAttemptsTable {
  id: Generated<string>;
  email: string;
  succeeded: boolean;
  reason: string | null;
  ip: string | null;
  at: DefaultTimestamp;
}

export type PeopleChangeKind =
  | "invited"
  | "invitation_accepted"
  | "role_changed"
  | "deactivated"
  | "reactivated"
  | "password_reset_requested"
  | "password_reset";

export type OutboxStatus = "queued" | "sent" | "failed";

export interface OutboxTable {
  id: Generated<string>;
  to_address: string;
  subject: string;
  body_text: string;
  status: Generated<OutboxStatus>;
  attempts: Generated<number>;
  last_error: string | null;
  next_attempt_at: DefaultTimestamp;
  created_at: DefaultTimestamp;
  sent_at: Timestamp | null;
}

export interface CurvePresetsTable {
  id: Generated<string>;
  name: string;
  current_version: Generated<number>;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
}

export interface CurvePresetVersionsTable {
  preset_id: string;
  version: number;
  name: string;
  /** The CurveSpec of lib/curves, as JSON. */
  spec: ColumnType<StoredCurveSpec, string, string>;
  notes: Generated<string>;
  change_note: string;
  created_by: string | null;
  created_at: DefaultTimestamp;
  /** Earlier versions of the same preset this one corrects (empty: not a correction). */
  corrects_versions: ColumnType<number[], number[] | undefined, never>;
  /** What was wrong and on what evidence; required exactly when it corrects. */
  correction_note: ColumnType<string | null, string | null | undefined, never>;
}

export interface AccessionsTable {
  id: Generated<string>;
  identifier: string;
  source: string;
  /** A calendar date, kept as 'YYYY-MM-DD' text on the way in and out. */
  received_on: ColumnType<string, string, string>;
  notes: Generated<string>;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
}

export type DiscFormat =
  "shellac_78" | "instantaneous_lacquer" | "transcription" | "vinyl_78" | "microgroove_lp" | "other";
export type DiscBase = "aluminium" | "glass" | "card" | "unknown";
export type ConditionGrade = "unassessed" | "excellent" | "good" | "fair" | "poor" | "unplayable";
/** In the archive's order: assigned → flat transfer accepted → curve chosen → rendered → in review → approved or returned. */
export type SideStatus =
  | "catalogued"
  | "assigned"
  | "transferred"
  | "curve_chosen"
  | "rendered"
  | "in_review"
  | "approved"
  | "returned";

export interface DiscsTable {
  id: Generated<string>;
  accession_id: string;
  shelf_mark: string;
  label_name: Generated<string>;
  catalogue_number: Generated<string>;
  format: DiscFormat;
  base: DiscBase | null;
  /** numeric comes back from pg as a string. */
  diameter_in: ColumnType<string | null, number | string | null, number | string | null>;
  nominal_speed_rpm: ColumnType<string | number, number | string, number | string>;
  groove: "coarse" | "micro";
  cut: "lateral" | "vertical";
  recording_date: ColumnType<string | null, string | null, string | null>;
  recorded_from_year: number | null;
  recorded_to_year: number | null;
  condition_grade: Generated<ConditionGrade>;
  condition_flags: Generated<string[]>;
  condition_notes: Generated<string>;
  handling_notes: Generated<string>;
  version: Generated<number>;
  search_tsv: Generated<string>;
  search_codes: Generated<string>;
  /** The first side's title, the catalogue's title sort key (refreshSearch keeps it); null when blank. */
  first_title: Generated<string | null>;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
}

export interface SidesTable {
  id: Generated<string>;
  disc_id: string;
  designation: string;
  matrix_number: Generated<string>;
  take: Generated<string>;
  title: Generated<string>;
  performers: Generated<string>;
  notes: Generated<string>;
  status: Generated<SideStatus>;
  assigned_engineer_id: string | null;
  return_reason: string | null;
  /** What the side stands on now (lib/sides/lifecycle.ts is their only writer). */
  current_transfer_id: Generated<string | null>;
  current_curve_choice_id: Generated<string | null>;
  current_render_id: Generated<string | null>;
  version: Generated<number>;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
}

export interface ProvenanceEventsTable {
  seq: ColumnType<number, never, never>;
  id: string;
  at: ColumnType<Date, string, never>;
  actor_id: string | null;
  kind: string;
  subject_type: string;
  subject_id: string | null;
  disc_id: string | null;
  payload: ColumnType<unknown, string, never>;
  prev_hash: string;
  hash: string;
}

export type EvidenceKind = "published_guidance" | "test_disc" | "listening" | "disc_documentation" | "other";

export interface CurveChoicesTable {
  id: Generated<string>;
  side_id: string;
  preset_id: string | null;
  preset_version: number | null;
  preset_name: string | null;
  preset_spec: ColumnType<StoredCurveSpec | null, string | null, never>;
  overrides: ColumnType<StoredCurveSpec, string, never>;
  spec: ColumnType<StoredCurveSpec, string, never>;
  /** SHA-256 of the spec's canonical JSON: what a review approves. */
  spec_sha256: string;
  cut_speed_rpm: ColumnType<string | number, number, never>;
  transfer_speed_rpm: ColumnType<string | number, number, never>;
  /** The render resamples by cut ÷ transfer speed before writing (never when the two are equal). */
  correct_speed: Generated<boolean>;
  rationale: string;
  evidence_kind: EvidenceKind;
  evidence: Generated<string>;
  chosen_by: string;
  chosen_at: DefaultTimestamp;
}

/** The test-disc measurement a curve choice rests on, with the server's fit of it (append-only). */
export interface CurveChoiceEvidenceTable {
  choice_id: string;
  evidence_kind: Generated<"test_disc">;
  points_kind: "recording" | "playback";
  points: ColumnType<{ hz: number; db: number }[], string, never>;
  fit_parameters: string[];
  fitted_spec: ColumnType<StoredCurveSpec, string, never>;
  level_offset_db: number;
  residuals: ColumnType<{ hz: number; db: number; modelDb: number; residualDb: number }[], string, never>;
  rms_db: number;
  worst_db: number;
  worst_hz: number;
  source_file_name: string | null;
  source_text: string | null;
  source_sha256: string | null;
  created_at: DefaultTimestamp;
}

export interface TransfersTable {
  id: Generated<string>;
  side_id: string;
  object_key: string;
  file_name: string;
  sha256: string;
  bytes: ColumnType<number, number, never>;
  container: string;
  encoding: string;
  bits_per_sample: number;
  channels: number;
  sample_rate_hz: number;
  frames: ColumnType<number, number, never>;
  duration_seconds: number;
  bext: ColumnType<unknown, string | null, never>;
  stylus_size: Generated<string>;
  stylus_shape: Generated<string>;
  measured_speed_rpm: ColumnType<string | number | null, number | null, never>;
  chain: Generated<string>;
  derived_from: string | null;
  uploaded_by: string;
  /** The upload it came from (null only for transfers recorded before uploads were kept). */
  upload_id: string | null;
  /** The register's chain the engineer picked (its items are in transfer_equipment). */
  equipment_chain_id: Generated<string | null>;
  created_at: DefaultTimestamp;
}

export type UploadState = "open" | "completing" | "completed" | "aborted" | "refused";

export interface UploadsTable {
  id: string;
  side_id: string;
  started_by: string;
  object_key: string;
  storage_upload_id: string;
  file_name: string;
  declared_bytes: ColumnType<number, number, never>;
  part_size: ColumnType<number, number, never>;
  part_count: number;
  state: Generated<UploadState>;
  claim: string | null;
  claimed_at: Timestamp | null;
  reason: string | null;
  expires_at: Timestamp;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
  finished_at: Timestamp | null;
}

export type RenderStatus = "queued" | "running" | "done" | "failed" | "cancelled";
export type ChannelMode = "both" | "sum" | "difference" | "left" | "right";

export interface RendersTable {
  id: Generated<string>;
  side_id: string;
  transfer_id: string;
  curve_choice_id: string;
  status: Generated<RenderStatus>;
  progress: Generated<number>;
  channel_mode: ChannelMode;
  bit_depth: number;
  /** The access copy's rate (the transfer's unless the lab chose another). */
  sample_rate_hz: number | null;
  object_key: string | null;
  sha256: string | null;
  bytes: number | null;
  trim_db: number | null;
  peak_dbfs: number | null;
  filter: ColumnType<StoredRenderFilter | null, string | null, string | null>;
  error: string | null;
  superseded_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
  superseded_reason: string | null;
  requested_by: string;
  created_at: DefaultTimestamp;
  started_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
  finished_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
  /** Renewed every few seconds by the worker running the render (its lease). */
  heartbeat_at: Generated<Date | null>;
  /** The worker holding the running render's lease. */
  lease_owner: Generated<string | null>;
  /** The worker that made and recorded the access copy (host:pid:random). */
  worker_identity: Generated<string | null>;
}

export interface ReviewsTable {
  id: Generated<string>;
  side_id: string;
  curator_id: string;
  decision: "approved" | "returned";
  reason: string | null;
  transfer_id: string | null;
  render_id: string | null;
  curve_choice_id: string | null;
  transfer_sha256: string | null;
  render_sha256: string | null;
  curve_spec_sha256: string | null;
  decided_at: DefaultTimestamp;
}

export type FixityOutcome = "pass" | "mismatch" | "missing" | "error";

export interface FixityChecksTable {
  id: Generated<string>;
  object_kind: "transfer" | "render" | "label_image";
  object_id: string;
  object_key: string;
  /** Null only for a label image of the sleeve, which belongs to the disc. */
  side_id: string | null;
  /** Set for label images (the disc they belong to). */
  disc_id: Generated<string | null>;
  expected_sha256: string;
  actual_sha256: string | null;
  bytes: number | null;
  outcome: FixityOutcome;
  detail: string | null;
  checked_at: DefaultTimestamp;
  acknowledged_by: string | null;
  acknowledged_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
  /** The worker that read the object back (host:pid:random); null for checks made elsewhere. */
  worker_identity: Generated<string | null>;
}

export interface ChainChecksTable {
  id: Generated<string>;
  ok: boolean;
  events: number;
  broken_seq: number | null;
  broken_reason: string | null;
  run_by: string | null;
  checked_at: DefaultTimestamp;
  /** How many checkpoints the chain was checked against, and where they were read from. */
  checkpoints: Generated<number>;
  checkpoint_source: string | null;
  /** The object key of the first checkpoint the log contradicted. */
  contradicted_checkpoint: string | null;
}

/** The database's note of each checkpoint written to the bucket (append-only). */
export interface ChainCheckpointsTable {
  id: Generated<string>;
  object_key: string;
  head_seq: number;
  head_hash: string;
  events: number;
  taken_at: ColumnType<Date, Date | string, never>;
  reason: "scheduled" | "requested";
  requested_by: string | null;
  created_at: DefaultTimestamp;
}

export interface LabSettingsTable {
  key: string;
  value: ColumnType<unknown, string, string>;
  updated_by: string | null;
  updated_at: DefaultTimestamp;
}

export type CampaignState = "running" | "finished";
export type CampaignSideState = "waiting" | "done" | "failed" | "cancelled";

export interface CampaignsTable {
  id: Generated<string>;
  preset_id: string;
  correcting_version: number;
  title: string;
  rationale: string;
  state: Generated<CampaignState>;
  started_by: string;
  started_at: DefaultTimestamp;
  finished_at: ColumnType<Date | null, Date | string | null | undefined, Date | string | null>;
  cancelled_by: string | null;
  cancelled_at: ColumnType<Date | null, Date | string | null | undefined, Date | string | null>;
  mailed_at: ColumnType<Date | null, Date | string | null | undefined, Date | string | null>;
}

export interface CampaignSidesTable {
  campaign_id: string;
  side_id: string;
  state: Generated<CampaignSideState>;
  status_before: SideStatus;
  from_choice_id: string;
  choice_id: string | null;
  render_id: string | null;
  attempts: Generated<number>;
  error: string | null;
  /** What became of the side, in words (done sides). */
  outcome: string | null;
  updated_at: DefaultTimestamp;
}

export interface SideTransitionsTable {
  from_status: SideStatus;
  to_status: SideStatus;
}

export type EquipmentKind =
  "turntable" | "tonearm" | "cartridge" | "stylus" | "preamplifier" | "converter" | "other";
/** A calendar date, kept as 'YYYY-MM-DD' text on the way in and out. */
type DateText = ColumnType<string, string, string>;
type NullableDateText = ColumnType<string | null, string | null, string | null>;
/** numeric comes back from pg as a string. */
type Numeric = ColumnType<string | null, number | string | null, number | string | null>;

export interface EquipmentItemsTable {
  id: Generated<string>;
  kind: EquipmentKind;
  make: string;
  model: Generated<string>;
  serial: Generated<string>;
  in_service_on: NullableDateText;
  out_of_service_on: NullableDateText;
  /** A stylus's tip in µm (shown in mil too); null for every other kind. */
  stylus_tip_um: Numeric;
  stylus_shape: string | null;
  notes: Generated<string>;
  version: Generated<number>;
  created_by: string | null;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
}

export interface EquipmentChainsTable {
  id: Generated<string>;
  name: string;
  notes: Generated<string>;
  retired_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
  version: Generated<number>;
  created_by: string | null;
  created_at: DefaultTimestamp;
  updated_at: DefaultTimestamp;
}

export interface EquipmentChainItemsTable {
  chain_id: string;
  item_id: string;
  kind: EquipmentKind;
}

/** The items a transfer was made with, as the register described them that day (append-only). */
export interface TransferEquipmentTable {
  transfer_id: string;
  item_id: string;
  kind: EquipmentKind;
  make: string;
  model: string;
  serial: string;
  stylus_tip_um: Numeric;
  stylus_shape: string | null;
  swapped: Generated<boolean>;
}

export interface EquipmentCalibrationsTable {
  id: Generated<string>;
  chain_id: string;
  calibrated_on: DateText;
  test_disc: string;
  item_ids: string[];
  expected_name: string;
  expected_preset_id: string | null;
  expected_preset_version: number | null;
  expected_spec: ColumnType<StoredCurveSpec, string, never>;
  points: ColumnType<{ hz: number; db: number }[], string, never>;
  points_kind: "recording" | "playback";
  fit_parameters: string[];
  fitted_spec: ColumnType<StoredCurveSpec, string, never>;
  fit_rms_db: number;
  deviation_rms_db: number;
  deviation_worst_db: number;
  deviation_worst_hz: number;
  notes: Generated<string>;
  recorded_by: string;
  created_at: DefaultTimestamp;
}

export interface EquipmentFindingsTable {
  id: Generated<string>;
  item_id: string;
  found_on: DateText;
  outcome: "fault" | "good";
  description: string;
  recorded_by: string;
  created_at: DefaultTimestamp;
}

export type LabelImageKind = "label" | "sleeve";
export type LabelImageFormat = "jpeg" | "png" | "tiff";

/** A photograph or scan of a side's label or of the sleeve, stored in the bucket (pending until checked). */
export interface LabelImagesTable {
  id: string;
  disc_id: string;
  side_id: string | null;
  kind: LabelImageKind;
  /** A withdrawn image (added by mistake) keeps its row and objects but leaves the disc's page, record and bags. */
  state: Generated<"pending" | "stored" | "refused" | "withdrawn">;
  object_key: string;
  thumbnail_key: string | null;
  file_name: string;
  declared_type: string;
  declared_bytes: number;
  format: LabelImageFormat | null;
  width: number | null;
  height: number | null;
  bytes: number | null;
  sha256: string | null;
  reason: string | null;
  uploaded_by: string;
  created_at: DefaultTimestamp;
  expires_at: ColumnType<Date, Date | string, Date | string>;
  stored_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
  withdrawn_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
  withdrawn_by: string | null;
  withdrawn_reason: string | null;
}

/** A BagIt package a curator asked to be written into the delivery prefix of a bucket. */
export interface BagDeliveriesTable {
  id: Generated<string>;
  scope: "disc" | "accession";
  disc_id: string | null;
  accession_id: string | null;
  state: Generated<"queued" | "running" | "done" | "failed">;
  bucket: string;
  prefix: string;
  payload_oxum: string | null;
  tagmanifest_sha256: string | null;
  error: string | null;
  requested_by: string;
  requested_at: DefaultTimestamp;
  started_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
  heartbeat_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
  finished_at: ColumnType<Date | null, Date | string | null, Date | string | null>;
}

export interface Database {
  campaigns: CampaignsTable;
  campaign_sides: CampaignSidesTable;
  equipment_items: EquipmentItemsTable;
  equipment_chains: EquipmentChainsTable;
  equipment_chain_items: EquipmentChainItemsTable;
  transfer_equipment: TransferEquipmentTable;
  equipment_calibrations: EquipmentCalibrationsTable;
  equipment_findings: EquipmentFindingsTable;
  label_images: LabelImagesTable;
  bag_deliveries: BagDeliveriesTable;
  side_transitions: SideTransitionsTable;
  reviews: ReviewsTable;
  fixity_checks: FixityChecksTable;
  chain_checks: ChainChecksTable;
  chain_checkpoints: ChainCheckpointsTable;
  lab_settings: LabSettingsTable;
  curve_choices: CurveChoicesTable;
  curve_choice_evidence: CurveChoiceEvidenceTable;
  transfers: TransfersTable;
  uploads: UploadsTable;
  renders: RendersTable;
  curve_presets: CurvePresetsTable;
  curve_preset_versions: CurvePresetVersionsTable;
  users: UsersTable;
  invitations: InvitationsTable;
  password_resets: PasswordResetsTable;
  sign_in_attempts: SignInAttemptsTable;
  accessions: AccessionsTable;
  discs: DiscsTable;
  sides: SidesTable;
  provenance_events: ProvenanceEventsTable;
  outbox: OutboxTable;
}

export type User = Selectable<UsersTable>;
export type NewUser = Insertable<UsersTable>;
export type UserUpdate = Updateable<UsersTable>;
export type Invitation = Selectable<InvitationsTable>;
export type OutboxMessage = Selectable<OutboxTable>;
