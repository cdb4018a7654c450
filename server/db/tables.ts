import type { Knex } from 'knex'
import type { FindingEventKind } from '#shared/types/findings'
import type { CellDecision } from '#shared/utils/cellStats'
import type { Comparator } from '#shared/utils/conformance'
import type { FixState, Lane, Severity } from '#shared/utils/lanes'
import type { Role } from '#shared/utils/roles'
import type { Quantity } from '#shared/utils/units'

// Every table as a query returns its rows, declared once (the migrations make them). Knex reads
// this map: `db('readings').where(…).first()` is a ReadingRow, with no cast. Aliased names
// ('readings as rd') and joins stay untyped; give those a row type where they are written.
// Inserts and updates check column names only (values may be raw SQL, JSON text …).

export interface UserRow {
  id: string
  email: string
  name: string
  password_hash: string
  session_version: number
  created_at: Date
  updated_at: Date
}

export interface TeamRow {
  id: string
  name: string
  slug: string
  personal: boolean
  demo: boolean
  created_at: Date
  updated_at: Date
}

export interface MembershipRow {
  team_id: string
  user_id: string
  role: Role
  created_at: Date
  updated_at: Date
}

export interface InvitationRow {
  id: string
  team_id: string
  email: string
  role: Role
  token_hash: string
  invited_by: string | null
  expires_at: Date
  accepted_at: Date | null
  accepted_by: string | null
  cancelled_at: Date | null
  created_at: Date
  updated_at: Date
}

export interface PasswordResetRow {
  id: string
  user_id: string
  token_hash: string
  expires_at: Date
  used_at: Date | null
  created_at: Date
}

export interface BuildRow {
  id: string
  team_id: string
  name: string
  slug: string
  summary: string
  archived_at: Date | null
  created_by: string | null
  created_at: Date
  updated_at: Date
}

export interface RigTokenRow {
  id: string
  build_id: string
  name: string
  prefix: string
  token_hash: string
  created_by: string | null
  expires_at: Date | null
  last_used_at: Date | null
  last_used_ip: string | null
  revoked_at: Date | null
  created_at: Date
}

export interface LoginFailureRow {
  id: number
  email: string
  ip: string
  at: Date
}

export interface ResetRequestRow {
  id: number
  email: string
  ip: string
  user_agent: string
  at: Date
  settled_at: Date | null
}

export interface AuditLogRow {
  id: number
  team_id: string | null
  actor_id: string | null
  actor_label: string
  action: string
  detail: Record<string, unknown>
  ip: string | null
  user_agent: string | null
  at: Date
}

export interface TargetRow {
  id: string
  build_id: string
  key: string
  name: string
  unit: string
  quantity: Quantity
  comparator: Comparator
  threshold: number
  threshold_high: number | null
  stretch: number | null
  noise_band: number | null
  notes: string
  position: number
  archived_at: Date | null
  /** a derived target's formula over other targets' keys; null for a measured target */
  formula: string | null
  /** a design model over the revisions' parameter keys; null without one */
  model: string | null
  created_by: string | null
  created_at: Date
  updated_at: Date
}

export interface RevisionRow {
  id: string
  build_id: string
  label: string
  seq: number
  parent_id: string | null
  built_on: string | null
  summary: string
  changes: string[]
  /** design parameters as entered (shared/utils/design.ts DesignParameter) */
  parameters: { key: string, name: string, value: number | string, unit: string | null, tolerance: number | null }[]
  frozen_at: Date | null
  frozen_by: string | null
  created_by: string | null
  created_at: Date
  updated_at: Date
}

/**
 * The statistics of a sample set in SI, as both readings (one reading's samples) and cell_stats
 * (a cell's readings pooled) store them; StatsColumns.of / StatsColumns.cell convert.
 */
export interface StatsRow {
  n: number
  mean: number
  sd: number | null
  u_a: number | null
  u_b: number | null
  u: number | null
  nu_eff: number | null
  ci_low: number | null
  ci_high: number | null
}

/** The points a track reading was fitted to, as entered, and the footage they were marked on. */
export interface StoredTrack {
  timeUnit: string
  unit: string
  points: { t: number, x: number, frame?: number }[]
  file: string | null
}

export interface ReadingRow extends StatsRow {
  id: string
  target_id: string
  revision_id: string
  values_si: number[]
  values_entered: number[]
  unit_entered: string
  method: string
  resolution_si: number | null
  resolution_entered: number | null
  /** a stated result's standard uncertainty in SI; null for a samples reading */
  stated_u_si: number | null
  /** the same as entered, in unit_entered */
  stated_u_entered: number | null
  /** a stated result's degrees of freedom; null: infinite (or a samples reading) */
  stated_dof: number | null
  /** a track reading's points and units; null for other kinds */
  track: StoredTrack | null
  taken_at: Date
  taken_by: string | null
  rig_token_id: string | null
  notes: string
  created_at: Date
}

export interface CellRow extends StatsRow {
  target_id: string
  revision_id: string
  build_id: string
  /** how many readings were pooled */
  readings: number
  /** how many of them are stated results (0: samples only) */
  stated: number
  status: CellDecision['status']
  delta: number | null
  p: number | null
  movement: CellDecision['movement']
  real: boolean | null
  reason: CellDecision['reason']
  updated_at?: Date
}

export interface FindingRow {
  id: string
  build_id: string
  title: string
  description: string
  severity: Severity
  lane: Lane
  rank: string
  version: number
  seen_on_revision_id: string | null
  closed_at: Date | null
  verified_revision_id: string | null
  override_reason: string | null
  override_by: string | null
  created_by: string | null
  created_by_rig: string | null
  created_at: Date
  updated_at: Date
}

export interface FindingTargetRow {
  finding_id: string
  target_id: string
}

export interface FixRow {
  id: string
  finding_id: string
  description: string
  owner_id: string | null
  due_on: string | null
  state: FixState
  landed_revision_id: string | null
  created_by: string | null
  created_at: Date
  updated_at: Date
}

export interface FindingEventRow {
  id: number
  finding_id: string
  kind: FindingEventKind
  actor_id: string | null
  actor_label: string
  detail: Record<string, unknown>
  at: Date
}

export interface FindingCommentRow {
  id: string
  finding_id: string
  author_id: string | null
  body: string
  mentions: string[]
  created_at: Date
}

export interface FileRow {
  id: string
  build_id: string
  revision_id: string | null
  reading_id: string | null
  finding_id: string | null
  storage_key: string
  name: string
  size: number
  content_type: string
  kind: string
  sha256: string
  uploaded_by: string | null
  rig_token_id: string | null
  created_at: Date
}

export interface EventRow {
  id: number
  build_id: string
  type: 'target.met' | 'target.slipped' | 'finding.safety' | 'revision.frozen'
  target_id: string | null
  revision_id: string | null
  finding_id: string | null
  before: Record<string, unknown> | null
  after: Record<string, unknown> | null
  detail: Record<string, unknown>
  fanned_out_at: Date | null
  at: Date
}

export interface SubscriptionRow {
  user_id: string
  build_id: string
  frequency: 'immediate' | 'daily' | 'weekly' | 'off'
  digested_through: number
  created_at: Date
  updated_at: Date
}

export interface DeliveryRow {
  id: number
  user_id: string
  build_id: string
  key: string
  status: 'sending' | 'sent'
  event_ids: number[]
  claimed_at: Date
  sent_at: Date | null
}

export interface MentionNoticeRow {
  comment_id: string
  user_id: string
  created_at: Date
  sent_at: Date | null
}

/** Inserts and updates name existing columns; values may be raw SQL or JSON text. */
type Writable<Row> = { [K in keyof Row]?: unknown }
type Table<Row> = Knex.CompositeTableType<Row, Writable<Row>, Writable<Row>>

declare module 'knex/types/tables' {
  interface Tables {
    users: Table<UserRow>
    teams: Table<TeamRow>
    memberships: Table<MembershipRow>
    invitations: Table<InvitationRow>
    password_resets: Table<PasswordResetRow>
    builds: Table<BuildRow>
    rig_tokens: Table<RigTokenRow>
    login_failures: Table<LoginFailureRow>
    reset_requests: Table<ResetRequestRow>
    audit_log: Table<AuditLogRow>
    targets: Table<TargetRow>
    revisions: Table<RevisionRow>
    readings: Table<ReadingRow>
    cell_stats: Table<CellRow>
    findings: Table<FindingRow>
    finding_targets: Table<FindingTargetRow>
    fixes: Table<FixRow>
    finding_events: Table<FindingEventRow>
    finding_comments: Table<FindingCommentRow>
    files: Table<FileRow>
    events: Table<EventRow>
    subscriptions: Table<SubscriptionRow>
    deliveries: Table<DeliveryRow>
    mention_notices: Table<MentionNoticeRow>
  }
}
