-- Bulk ingest: the foreign key from event_revision.key_id costs one row-locking lookup of api_key per revision
-- (about a fifth of a 100,000-event batch); integrity is kept instead by never deleting a key.
-- Keys are revoked, never deleted (revoked_at), so a revision's key_id always names a key that exists; the
-- trigger below makes that a rule of the database rather than a habit of the code. The key id written into a
-- revision comes from the authenticated request, never from the request body.
alter table event_revision drop constraint event_revision_key_id_fkey;

create function api_key_is_never_deleted() returns trigger language plpgsql as $$
begin
    raise exception 'API keys are revoked, never deleted (key %): revisions and forecasts name them', old.id
        using errcode = 'restrict_violation';
end $$;

create trigger api_key_never_deleted before delete on api_key
    for each row execute function api_key_is_never_deleted();
