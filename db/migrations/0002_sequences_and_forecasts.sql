-- 0002: aftershock sequences, the refit queue that keeps their forecasts current, and the immutable forecasts.

create table sequence (
    id                  bigint generated always as identity primary key,
    -- the current mainshock; changes when a larger event in the zone takes over (see sequence_mainshock_change)
    mainshock_pk        bigint           not null references event (id),
    name                text,
    status              text             not null default 'active' check (status in ('active', 'closed')),
    -- opened by the service on its own (an event at or above the trigger magnitude outside every zone)
    automatic           boolean          not null default false,
    -- a drill: every output says so
    exercise            boolean          not null default false,
    -- zone: radius = max(floor, multiple * Wells & Coppersmith rupture length), unless radius_override_km is set
    zone_multiple       double precision not null check (zone_multiple > 0),
    zone_floor_km       double precision not null check (zone_floor_km >= 0),
    zone_override_km    double precision check (zone_override_km > 0),
    -- the effective radius and centre, maintained by the service (from the mainshock as last seen); the event
    -- upsert reads them to queue refits inside its own transaction
    zone_radius_km      double precision not null check (zone_radius_km > 0),
    centre_latitude     double precision not null,
    centre_longitude    double precision not null,
    mainshock_time      timestamptz      not null,
    foreshock_days      double precision not null check (foreshock_days >= 0),
    parameter_set       text             not null,
    mc                  double precision,
    fit_start_days      double precision check (fit_start_days >= 0),
    background_rate_per_day   double precision check (background_rate_per_day >= 0),
    background_magnitude      double precision,
    -- the last failed fit; cleared by the next successful one
    last_error          text,
    last_error_at       timestamptz,
    next_forecast_number integer         not null default 1,
    created_by          bigint references api_key (id),
    created_at          timestamptz      not null default now(),
    updated_at          timestamptz      not null default now(),
    closed_at           timestamptz,
    check ((background_rate_per_day is null) = (background_magnitude is null))
);

-- One sequence per mainshock: declaring it twice is a conflict.
create unique index sequence_mainshock on sequence (mainshock_pk);
create index sequence_active on sequence (status) where status = 'active';

-- Every change of mainshock, oldest first.
create table sequence_mainshock_change (
    sequence_id     bigint           not null references sequence (id),
    changed_at      timestamptz      not null default now(),
    from_event_pk   bigint           not null references event (id),
    to_event_pk     bigint           not null references event (id),
    from_magnitude  double precision not null,
    to_magnitude    double precision not null,
    primary key (sequence_id, changed_at, to_event_pk)
);

-- At most one pending refit per sequence: bursts of events coalesce into the one row.
-- A worker claims a row with FOR UPDATE SKIP LOCKED and leases it (claimed_until); an enqueue during the fit
-- bumps generation, so the worker that finishes deletes the row only if nothing new arrived meanwhile.
create table refit_queue (
    sequence_id    bigint      primary key references sequence (id),
    reason         text        not null,
    requested_at   timestamptz not null default now(),
    generation     integer     not null default 1,
    claimed_by     text,
    claimed_until  timestamptz
);

create index refit_queue_requested on refit_queue (requested_at);

-- Events at or above the trigger magnitude, waiting to be checked against the active zones: an event outside
-- every zone opens a sequence of its own.
create table sequence_candidate (
    event_pk     bigint      primary key references event (id),
    queued_at    timestamptz not null default now()
);

-- Settings the event upsert needs inside its transaction; one row, written by the service at start-up.
create table sequence_setting (
    only_row           boolean primary key default true check (only_row),
    trigger_magnitude  double precision not null default 5.0
);
insert into sequence_setting default values;

-- Called by the event upsert, in its transaction, with the events it wrote: queues a refit for every active
-- sequence whose zone holds an event's new or previous position (a revision may move an event out), and queues
-- events at or above the trigger magnitude as candidate mainshocks.
create function queue_sequence_work(event_pks bigint[]) returns void
language plpgsql as $$
begin
    -- Bulk loads into a region with no active sequence (backfills, replays) skip the zone tests entirely.
    if exists (select 1 from sequence where status = 'active') then
        with touched as (
            select e.latitude, e.longitude from event e where e.id = any(event_pks)
            union
            select r.latitude, r.longitude
            from event e join event_revision r on r.event_pk = e.id and r.version = e.version - 1
            where e.id = any(event_pks) and e.version > 1
        )
        insert into refit_queue as q (sequence_id, reason)
        select distinct s.id, 'event'
        from sequence s
        join touched p on
            6371.0 * 2 * asin(least(1.0, sqrt(power(sin(radians(p.latitude - s.centre_latitude) / 2), 2)
                + cos(radians(s.centre_latitude)) * cos(radians(p.latitude))
                  * power(sin(radians(p.longitude - s.centre_longitude) / 2), 2)))) <= s.zone_radius_km
        where s.status = 'active'
        on conflict (sequence_id) do update set generation = q.generation + 1, reason = 'event';
    end if;

    insert into sequence_candidate (event_pk)
    select e.id from event e
    where e.id = any(event_pks) and e.status <> 'deleted'
      and e.magnitude >= (select trigger_magnitude from sequence_setting)
    on conflict do nothing;
end $$;

create table forecast (
    id               bigint generated always as identity primary key,
    sequence_id      bigint           not null references sequence (id),
    number           integer          not null,
    state            text             not null default 'draft'
                     check (state in ('draft', 'released', 'superseded', 'withdrawn')),
    -- what started it: event, schedule, manual, demo
    reason           text             not null,
    exercise         boolean          not null,
    issue_time       timestamptz      not null,
    created_at       timestamptz      not null default now(),
    engine_version   text             not null,
    parameter_set    text             not null,
    mainshock_pk     bigint           not null references event (id),
    mainshock_magnitude double precision not null,
    mc               double precision not null,
    fit_start_days   double precision not null,
    -- input snapshot: the member events the fit saw
    event_count      integer          not null,
    last_event_time  timestamptz,
    catalog_hash     text             not null,
    -- the engine's whole answer (System.Text.Json of ForecastResult) and the options asked for
    result           jsonb            not null,
    options          jsonb            not null,
    advisory_text    text             not null,
    created_by       bigint references api_key (id),
    released_at      timestamptz,
    released_by      bigint references api_key (id),
    -- the text as released when the analyst edited it; advisory_text keeps what the service wrote
    released_advisory_text text,
    withdrawn_at     timestamptz,
    withdrawn_by     bigint references api_key (id),
    withdraw_reason  text,
    unique (sequence_id, number)
);

create index forecast_released on forecast (sequence_id, number) where state = 'released';

-- A forecast is immutable: only its state and the release / withdrawal fields may change.
create function forecast_is_immutable() returns trigger language plpgsql as $$
begin
    if tg_op = 'DELETE' then
        raise exception 'forecasts are never deleted';
    end if;
    if (new.id, new.sequence_id, new.number, new.reason, new.exercise, new.issue_time, new.created_at,
        new.engine_version, new.parameter_set, new.mainshock_pk, new.mainshock_magnitude, new.mc,
        new.fit_start_days, new.event_count, new.last_event_time, new.catalog_hash, new.result::text,
        new.options::text, new.advisory_text, new.created_by)
       is distinct from
       (old.id, old.sequence_id, old.number, old.reason, old.exercise, old.issue_time, old.created_at,
        old.engine_version, old.parameter_set, old.mainshock_pk, old.mainshock_magnitude, old.mc,
        old.fit_start_days, old.event_count, old.last_event_time, old.catalog_hash, old.result::text,
        old.options::text, old.advisory_text, old.created_by) then
        raise exception 'a forecast''s content is immutable; only its state changes';
    end if;
    return new;
end $$;

create trigger forecast_immutable before update or delete on forecast
    for each row execute function forecast_is_immutable();
