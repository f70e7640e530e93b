// The one `Database` interface: every table the app reads or writes, as Kysely sees it.
// tests/api/db-schema.test.ts checks it against information_schema of the migrated database.
// Later areas add their tables here (keep one interface; group tables by area with comments).
import type { ColumnType, Generated, GeneratedAlways, Insertable, Selectable, Updateable } from 'kysely';

/** timestamptz: read as Date, written as Date or ISO string. */
export type Timestamp = ColumnType<Date, Date | string | undefined, Date | string>;
/** numeric: node-postgres returns a string to keep precision. */
export type Numeric = ColumnType<string, number | string, number | string>;
/** date: read as 'YYYY-MM-DD' (the pool sets a parser), written as string. */
export type DateOnly = ColumnType<string, string, string>;

export type Role = 'admin' | 'manager' | 'district' | 'researcher';

// --- reference data and configuration -------------------------------------------------------
export interface SettingsTable {
	key: string;
	value: ColumnType<unknown, string, string>;
	updated_at: Generated<Date>;
}

export interface CountiesTable {
	fips: string;
	state_fips: string;
	name: string;
}

export interface PracticesTable {
	code: string;
	name: string;
	category: 'in_field' | 'edge_of_field';
	credited_basis: 'extent_acres' | 'drainage_area_acres';
	unit: string;
	lifespan_years: number;
	source_note: string;
}

// --- districts and people ---------------------------------------------------------------------
export interface DistrictContact {
	name: string;
	email: string;
	phone?: string;
	title?: string;
}

export interface DistrictsTable {
	id: Generated<number>;
	code: string;
	name: string;
	region: string;
	contacts: ColumnType<DistrictContact[], string | undefined, string>;
	notify_on_rejected: Generated<boolean>;
	created_at: Generated<Date>;
}

export interface DistrictCountiesTable {
	district_id: number;
	county_fips: string;
}

export interface UsersTable {
	id: Generated<number>;
	email: string;
	name: string;
	role: Role;
	district_id: number | null;
	password_hash: string | null;
	active: Generated<boolean>;
	created_at: Generated<Date>;
	last_sign_in_at: Timestamp | null;
	/** The researcher does not want the new-release e-mail (dataset). */
	release_mail_opt_out: Generated<boolean>;
}

export interface ApiTokensTable {
	id: Generated<number>;
	user_id: number;
	name: string;
	token_hash: string;
	display_prefix: string;
	scopes: string[];
	expires_at: Timestamp | null;
	last_used_at: Timestamp | null;
	revoked_at: Timestamp | null;
	created_at: Generated<Date>;
}

// --- practice records ---------------------------------------------------------------------------
export interface RecordsTable {
	id: Generated<string>;
	district_id: number;
	local_id: string;
	version: number;
	practice_code: string;
	county_fips: string;
	installed_on: DateOnly;
	status: 'installed' | 'withdrawn';
	withdrawn_on: DateOnly | null;
	extent_acres: Numeric | null;
	drainage_area_acres: Numeric | null;
	field_id: string | null;
	operation_id: string | null;
	huc12: string | null;
	cost_total_usd: Numeric | null;
	cost_share_usd: Numeric | null;
	funding_program: string | null;
	data: ColumnType<Record<string, unknown>, string, string>;
	content_hash: string;
	created_at: Generated<Date>;
	updated_at: Generated<Date>;
}

export interface RecordVersionsTable {
	record_id: string;
	version: number;
	data: ColumnType<Record<string, unknown>, string, string>;
	changed_fields: string[];
	batch_id: string | null;
	actor: string;
	created_at: Generated<Date>;
}

// --- intake: batches, findings, idempotency keys, current record warnings ------------------------
export type BatchMode = 'check' | 'all' | 'valid';
export type BatchStatus = 'received' | 'checking' | 'done' | 'failed';
export type UploadFormat = 'csv' | 'xlsx' | 'ndjson' | 'json';
export type BatchRecordType = 'records' | 'events';

export interface BatchesTable {
	id: Generated<string>;
	district_id: number;
	mode: BatchMode;
	status: Generated<BatchStatus>;
	format: UploadFormat;
	content_type: string;
	file_name: string | null;
	sheet: string | null;
	size_bytes: ColumnType<string, number | string, number | string>;
	sha256: string;
	archive_key: string;
	schema_version: string;
	encoding: string | null;
	actor: string;
	user_id: number | null;
	rows_done: Generated<number>;
	rows: Generated<number>;
	accepted: Generated<number>;
	rejected: Generated<number>;
	errors: Generated<number>;
	warnings: Generated<number>;
	created: Generated<number>;
	updated: Generated<number>;
	unchanged: Generated<number>;
	withdrawn: Generated<number>;
	findings_by_code: ColumnType<Record<string, number>, string | undefined, string>;
	findings_by_column: ColumnType<Record<string, number>, string | undefined, string>;
	findings_omitted: Generated<number>;
	failure: string | null;
	attempts: Generated<number>;
	heartbeat_at: Timestamp | null;
	created_at: Generated<Date>;
	started_at: Timestamp | null;
	finished_at: Timestamp | null;
	committed_at: Timestamp | null;
	/** What the batch carries: practice records or upkeep events (migration 2026-12-03T0300_events). */
	record_type: Generated<BatchRecordType>;
}

export interface BatchFindingsTable {
	batch_id: string;
	seq: number;
	code: string;
	severity: 'error' | 'warning';
	row: number | null;
	column: string | null;
	column_number: number | null;
	cell: string | null;
	value: string | null;
	rule: ColumnType<Record<string, unknown>, string, string> | null;
	message: string;
}

export interface IdempotencyKeysTable {
	scope: string;
	key: string;
	fingerprint: string;
	batch_id: string | null;
	response_status: number;
	response_location: string | null;
	response_body: ColumnType<Record<string, unknown>, string, string>;
	created_at: Generated<Date>;
	expires_at: Timestamp;
}

export interface RecordFindingsTable {
	record_id: string;
	version: number;
	code: string;
	severity: 'error' | 'warning';
	column: string | null;
	value: string | null;
	rule: ColumnType<Record<string, unknown>, string, string> | null;
	message: string;
	batch_id: string | null;
	created_at: Generated<Date>;
}

// --- mail -----------------------------------------------------------------------------------------
export interface MailMessagesTable {
	id: Generated<string>;
	kind: string;
	to_addresses: string[];
	subject: string;
	text_body: string;
	html_body: string | null;
	status: Generated<'queued' | 'sent' | 'failed'>;
	attempts: Generated<number>;
	last_error: string | null;
	next_attempt_at: Generated<Date>;
	sent_at: Timestamp | null;
	created_at: Generated<Date>;
	/** RFC 5322 Message-ID the sender put on the message (the same on every retry). */
	message_id: string | null;
}

/** A message received by the in-process fake SMTP server (when SMTP_URL is unset). */
export interface MailReceivedTable {
	id: Generated<string>;
	message_id: string | null;
	envelope_from: string | null;
	envelope_to: string[];
	from_header: string | null;
	to_header: string | null;
	subject: string | null;
	text_body: string | null;
	html_body: string | null;
	raw: string;
	size_bytes: number;
	received_at: Generated<Date>;
}

// --- signing keys and OAuth clients --------------------------------------------------------------
export interface SigningKeysTable {
	kid: string;
	alg: string;
	public_jwk: ColumnType<Record<string, unknown>, string, string>;
	private_jwk: string;
	status: 'active' | 'previous' | 'retired';
	created_at: Generated<Date>;
	rotated_at: Timestamp | null;
	retired_at: Timestamp | null;
}

export interface OAuthClientsTable {
	id: Generated<number>;
	client_id: string;
	name: string;
	district_id: number;
	scopes: string[];
	secret_hash: string;
	created_by: number | null;
	created_at: Generated<Date>;
	last_used_at: Timestamp | null;
	revoked_at: Timestamp | null;
}

// --- reduction methods (estimates) --------------------------------------------------------------
export interface ReductionMethodsTable {
	id: Generated<number>;
	version: string;
	label: string;
	/** The whole method document (src/lib/domain/reduction-method.ts `ReductionMethod`). */
	method: ColumnType<import('../../domain/reduction-method').ReductionMethod, string, string>;
	created_by: string;
	created_at: Generated<Date>;
}

// --- accounts: sessions, one-time links, sign-in throttle, audit log --------------------------------
export interface SessionsTable {
	id: Generated<string>;
	user_id: number;
	token_hash: string;
	created_at: Generated<Date>;
	last_seen_at: Generated<Date>;
	expires_at: Timestamp;
	ip: string | null;
	user_agent: string | null;
}

export type AccountLinkPurpose = 'invitation' | 'password-reset';

export interface AccountLinksTable {
	id: Generated<string>;
	user_id: number;
	purpose: AccountLinkPurpose;
	token_hash: string;
	expires_at: Timestamp;
	used_at: Timestamp | null;
	created_by: number | null;
	created_at: Generated<Date>;
}

export interface SignInThrottleTable {
	key: string;
	failures: Generated<number>;
	last_failure_at: Timestamp;
}

export interface AuditLogTable {
	id: Generated<string>;
	at: Generated<Date>;
	action: string;
	actor: string;
	actor_user_id: number | null;
	subject_user_id: number | null;
	ip: string | null;
	detail: ColumnType<Record<string, unknown>, string | undefined, string>;
}

// --- rollups: stored estimates and summary cells ------------------------------------------------------
export interface RecordEstimatesTable {
	record_id: string;
	method_version: string;
	counted: boolean;
	reason: string | null;
	credited_acres: Numeric;
	n_lb_mean: Numeric;
	n_lb_low: Numeric;
	n_lb_high: Numeric;
	p_lb_mean: Numeric;
	p_lb_low: Numeric;
	p_lb_high: Numeric;
	district_id: number;
	county_fips: string;
	huc8: string | null;
	practice_code: string;
	field_id: string | null;
	operation_key: string;
	cost_usd: Numeric | null;
	cost_share_usd: Numeric | null;
	state_fy_start_month: number;
	state_fy_installed: number;
	state_fy_first: number | null;
	state_fy_last: number | null;
	federal_fy_installed: number;
	federal_fy_first: number | null;
	federal_fy_last: number | null;
	computed_at: Generated<Date>;
	// The research dataset's per-record values (migration 2026-12-05T0100_dataset_published): set by a
	// trigger from the record (pid when the transaction carries the pseudonym key), or generated.
	pub_pid: Generated<string | null>;
	pub_install_year: Generated<number | null>;
	pub_install_month: Generated<number | null>;
	pub_funding_program: Generated<string | null>;
	pub_included: Generated<boolean | null>;
	pub_acres: GeneratedAlways<number>;
	pub_n_mean: GeneratedAlways<number>;
	pub_n_low: GeneratedAlways<number>;
	pub_n_high: GeneratedAlways<number>;
	pub_p_mean: GeneratedAlways<number>;
	pub_p_low: GeneratedAlways<number>;
	pub_p_high: GeneratedAlways<number>;
}

export interface RollupCellsTable {
	method_version: string;
	fy_basis: 'state' | 'federal';
	basis: 'installed' | 'in_service';
	geo_level: 'county' | 'huc8' | 'district';
	fy: number;
	district_id: number;
	geo: string;
	practice_code: string;
	practices: number;
	operations: number;
	credited_acres: Numeric;
	cost_usd: Numeric;
	cost_share_usd: Numeric;
	n_lb_mean: Numeric;
	n_lb_low: Numeric;
	n_lb_high: Numeric;
	p_lb_mean: Numeric;
	p_lb_low: Numeric;
	p_lb_high: Numeric;
}

export interface RollupRefreshTable {
	method_version: string;
	status: 'pending' | 'running' | 'ready' | 'stale' | 'failed';
	state_fy_start_month: number | null;
	phase: string | null;
	done: Generated<number>;
	total: Generated<number>;
	error: string | null;
	requested_at: Generated<Date>;
	started_at: Timestamp | null;
	finished_at: Timestamp | null;
	updated_at: Generated<Date>;
}

// --- reviews and field verification (keeping the numbers honest) ------------------------------------
export type ReviewDecision = 'verified' | 'returned';
export type ReviewStatus = 'open' | 'verified' | 'returned' | 'cleared';
export type VisitOutcome = 'in_place_working' | 'needs_repair' | 'not_found';

export interface RecordReviewsTable {
	id: Generated<string>;
	record_id: string;
	version: number;
	decision: ReviewDecision;
	comment: string;
	warning_keys: ColumnType<string[], string[] | undefined, string[]>;
	decided_by_user_id: number | null;
	actor: string;
	decided_at: Generated<Date>;
	cleared_at: Timestamp | null;
	cleared_by_version: number | null;
}

export interface ReviewQueueTable {
	record_id: string;
	district_id: number;
	version: number;
	status: ReviewStatus;
	opened_at: Generated<Date>;
	updated_at: Generated<Date>;
	last_review_id: string | null;
}

export interface VerificationDrawsTable {
	id: Generated<number>;
	fiscal_year: number;
	seed: string;
	params: ColumnType<Record<string, unknown>, string, string>;
	population: number;
	sample_size: number;
	due_on: DateOnly;
	drawn_by_user_id: number | null;
	actor: string;
	created_at: Generated<Date>;
}

export interface VerificationVisitsTable {
	id: Generated<string>;
	draw_id: number;
	record_id: string;
	district_id: number;
	edge_of_field: boolean;
	never_visited: boolean;
	due_on: DateOnly;
	outcome: VisitOutcome | null;
	visited_on: DateOnly | null;
	repair_due_on: DateOnly | null;
	note: string | null;
	recorded_by_user_id: number | null;
	recorded_by: string | null;
	recorded_at: Timestamp | null;
	confirmed_by_user_id: number | null;
	confirmed_at: Timestamp | null;
}

// --- research dataset releases ---------------------------------------------------------------------
export interface DatasetReleasesTable {
	version: string;
	status: 'published' | 'withdrawn';
	notes: string;
	method_version: string;
	row_count: number;
	small_cells: ColumnType<Record<string, unknown>, string, string>;
	manifest: ColumnType<Record<string, unknown>, string, string>;
	manifest_jws: string;
	published_by: string;
	published_at: Generated<Date>;
	withdrawn_reason: string | null;
	withdrawn_at: Timestamp | null;
}

// --- upkeep records: practice events and their versions ------------------------------------------
export interface PracticeEventsTable {
	id: Generated<string>;
	district_id: number;
	record_id: string;
	local_id: string;
	event_on: DateOnly;
	kind: 'media_top_up' | 'structure_setting' | 'mowing' | 'repair' | 'inspection';
	version: number;
	stop_board_height_in: Numeric | null;
	media_added_cu_yd: Numeric | null;
	data: ColumnType<Record<string, unknown>, string, string>;
	content_hash: string;
	created_at: Generated<Date>;
	updated_at: Generated<Date>;
}

export interface PracticeEventVersionsTable {
	event_id: string;
	version: number;
	data: ColumnType<Record<string, unknown>, string, string>;
	changed_fields: string[];
	batch_id: string | null;
	actor: string;
	created_at: Generated<Date>;
}

/** One row: a counter every statement that changes record_estimates moves (migration 2026-12-05T0200). */
export interface EstimateGenerationTable {
	id: Generated<boolean>;
	n: ColumnType<string, string | number, string | number>;
}

export interface Database {
	settings: SettingsTable;
	estimate_generation: EstimateGenerationTable;
	counties: CountiesTable;
	practices: PracticesTable;
	districts: DistrictsTable;
	district_counties: DistrictCountiesTable;
	users: UsersTable;
	api_tokens: ApiTokensTable;
	records: RecordsTable;
	record_versions: RecordVersionsTable;
	mail_messages: MailMessagesTable;
	reduction_methods: ReductionMethodsTable;
	mail_received: MailReceivedTable;
	signing_keys: SigningKeysTable;
	oauth_clients: OAuthClientsTable;
	sessions: SessionsTable;
	account_links: AccountLinksTable;
	sign_in_throttle: SignInThrottleTable;
	audit_log: AuditLogTable;
	batches: BatchesTable;
	batch_findings: BatchFindingsTable;
	idempotency_keys: IdempotencyKeysTable;
	record_findings: RecordFindingsTable;
	record_estimates: RecordEstimatesTable;
	rollup_cells: RollupCellsTable;
	rollup_refresh: RollupRefreshTable;
	record_reviews: RecordReviewsTable;
	review_queue: ReviewQueueTable;
	verification_draws: VerificationDrawsTable;
	verification_visits: VerificationVisitsTable;
	dataset_releases: DatasetReleasesTable;
	practice_events: PracticeEventsTable;
	practice_event_versions: PracticeEventVersionsTable;
}

export type District = Selectable<DistrictsTable>;
export type NewDistrict = Insertable<DistrictsTable>;
export type User = Selectable<UsersTable>;
export type NewUser = Insertable<UsersTable>;
export type UserUpdate = Updateable<UsersTable>;
export type ApiToken = Selectable<ApiTokensTable>;
export type PracticeRecord = Selectable<RecordsTable>;
export type RecordVersion = Selectable<RecordVersionsTable>;
export type Practice = Selectable<PracticesTable>;
export type County = Selectable<CountiesTable>;
export type MailMessage = Selectable<MailMessagesTable>;
export type MailReceived = Selectable<MailReceivedTable>;
export type SigningKey = Selectable<SigningKeysTable>;
export type OAuthClient = Selectable<OAuthClientsTable>;
export type Session = Selectable<SessionsTable>;
export type AuditEntry = Selectable<AuditLogTable>;
export type Batch = Selectable<BatchesTable>;
export type BatchFinding = Selectable<BatchFindingsTable>;
