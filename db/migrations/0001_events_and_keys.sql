-- 0001: the event catalog with its append-only revision history, and the API keys that write to it.

create table api_key (
    id          bigint generated always as identity primary key,
    name        text        not null,
    role        text        not null check (role in ('feeder', 'analyst', 'admin')),
    -- first characters of the key, shown in listings so an operator can tell keys apart
    prefix      text        not null,
    -- SHA-256 of the whole key; the key itself is never stored
    secret_hash bytea       not null unique,
    created_at  timestamptz not null default now(),
    revoked_at  timestamptz
);

create table event (
    id             bigint generated always as identity primary key,
    -- byte order ("C") for opaque identifiers: cheaper comparisons in the unique index than a locale's rules
    source         text collate "C" not null,
    event_id       text collate "C" not null,
    origin_time    timestamptz      not null,
    latitude       double precision not null,
    longitude      double precision not null,
    depth_km       double precision not null,
    magnitude      double precision not null,
    magnitude_type text             not null,
    status         text             not null check (status in ('automatic', 'reviewed', 'deleted')),
    version        integer          not null default 1,
    -- fields that the latest revision changed; written in the upsert from the locked current row
    last_changed   text[]           not null default '{}',
    created_at     timestamptz      not null default now(),
    updated_at     timestamptz      not null default now(),
    constraint event_source_id unique (source, event_id)
);

create index event_origin_time on event (origin_time, id);

-- Every version of every event, the first included; never updated or deleted.
-- event_pk has no foreign key on purpose: rows are written only by the upsert that writes the event, events are
-- never deleted, and a per-row foreign-key check costs about a third of a 100,000-event batch.
create table event_revision (
    event_pk       bigint           not null,
    version        integer          not null,
    recorded_at    timestamptz      not null default now(),
    key_id         bigint           references api_key (id),
    -- names of the fields that differ from the previous version (empty for the first)
    changed        text[]           not null,
    origin_time    timestamptz      not null,
    latitude       double precision not null,
    longitude      double precision not null,
    depth_km       double precision not null,
    magnitude      double precision not null,
    magnitude_type text             not null,
    status         text             not null,
    primary key (event_pk, version)
);

create function event_revision_is_append_only() returns trigger language plpgsql as $$
begin
    raise exception 'event_revision is append-only';
end $$;

create trigger event_revision_append_only before update or delete on event_revision
    for each row execute function event_revision_is_append_only();
