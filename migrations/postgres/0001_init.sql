-- Fluxbound schema, version 1 (PostgreSQL). Portable column types only:
-- TEXT (ids, JSON, RFC 3339 UTC timestamps), BIGINT (integers, 0/1 flags).
CREATE TABLE organisations (
    id TEXT PRIMARY KEY,
    name TEXT NOT NULL UNIQUE,
    created_at TEXT NOT NULL
);
CREATE TABLE api_keys (
    id TEXT PRIMARY KEY,
    org_id TEXT NOT NULL REFERENCES organisations (id),
    role TEXT NOT NULL,
    secret_sha256 TEXT NOT NULL,
    label TEXT,
    created_at TEXT NOT NULL,
    revoked_at TEXT
);
CREATE INDEX api_keys_org ON api_keys (org_id);
CREATE TABLE sites (
    id TEXT PRIMARY KEY,
    org_id TEXT NOT NULL REFERENCES organisations (id),
    name TEXT NOT NULL,
    latest_revision BIGINT NOT NULL,
    created_at TEXT NOT NULL,
    updated_at TEXT NOT NULL,
    deleted_at TEXT
);
CREATE INDEX sites_org ON sites (org_id, id);
CREATE TABLE site_revisions (
    site_id TEXT NOT NULL REFERENCES sites (id),
    revision BIGINT NOT NULL,
    body TEXT NOT NULL,
    created_at TEXT NOT NULL,
    PRIMARY KEY (site_id, revision)
);
CREATE TABLE ref_tables (
    id TEXT PRIMARY KEY,
    org_id TEXT NOT NULL REFERENCES organisations (id),
    table_key TEXT NOT NULL,
    latest_version BIGINT NOT NULL,
    created_at TEXT NOT NULL,
    UNIQUE (org_id, table_key)
);
CREATE TABLE ref_table_versions (
    table_id TEXT NOT NULL REFERENCES ref_tables (id),
    version BIGINT NOT NULL,
    body TEXT NOT NULL,
    used BIGINT NOT NULL DEFAULT 0,
    created_at TEXT NOT NULL,
    updated_at TEXT NOT NULL,
    PRIMARY KEY (table_id, version)
);
CREATE TABLE assessments (
    id TEXT PRIMARY KEY,
    org_id TEXT NOT NULL REFERENCES organisations (id),
    site_id TEXT NOT NULL REFERENCES sites (id),
    site_revision BIGINT NOT NULL,
    request TEXT NOT NULL,
    result TEXT NOT NULL,
    worst_verdict TEXT NOT NULL,
    created_at TEXT NOT NULL
);
CREATE INDEX assessments_site ON assessments (org_id, site_id, id);
