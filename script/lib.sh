# Shared helpers for script/server and script/test. Source it; do not run it.
# Finds (or installs) the PostgreSQL binaries and starts a cluster as the right user.

pg_bindir() {
    if command -v initdb >/dev/null 2>&1 && command -v pg_ctl >/dev/null 2>&1; then
        dirname "$(readlink -f "$(command -v initdb)")"
        return 0
    fi
    local d
    for d in /usr/lib/postgresql/*/bin; do
        [ -x "$d/initdb" ] && { echo "$d"; return 0; }
    done
    return 1
}

ensure_postgres() {
    if ! PG_BIN=$(pg_bindir); then
        echo "PostgreSQL binaries not found; installing the Debian package 'postgresql'." >&2
        if [ "$(id -u)" -ne 0 ]; then
            echo "Not root: install PostgreSQL yourself (apt-get install postgresql) and run again." >&2
            exit 1
        fi
        DEBIAN_FRONTEND=noninteractive apt-get update -qq >/dev/null
        DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql >/dev/null
        PG_BIN=$(pg_bindir) || { echo "PostgreSQL install failed." >&2; exit 1; }
    fi
    export PG_BIN
}

# Runs a PostgreSQL command as the postgres user when we are root (PostgreSQL refuses root).
as_pg() {
    if [ "$(id -u)" -eq 0 ]; then
        (cd / && runuser -u postgres -- "$@")
    else
        "$@"
    fi
}

free_port() {
    local port
    for port in $(seq "${1:-55432}" 65000); do
        if ! (exec 3<>"/dev/tcp/127.0.0.1/$port") 2>/dev/null; then
            echo "$port"
            return 0
        fi
    done
    return 1
}

# start_cluster DIR PORT [throwaway]
# With "throwaway", durability is switched off (fsync etc.): for test clusters only.
start_cluster() {
    local dir=$1 port=$2 mode=${3:-}
    mkdir -p "$dir"
    if [ "$(id -u)" -eq 0 ]; then
        id postgres >/dev/null 2>&1 || useradd --system --home-dir /var/lib/postgresql --shell /bin/bash postgres
        chown postgres "$dir"
    fi
    if [ ! -f "$dir/data/PG_VERSION" ]; then
        as_pg "$PG_BIN/initdb" -D "$dir/data" -U postgres --auth=trust -E UTF8 --locale=C.UTF-8 --no-sync >"$dir/initdb.log" 2>&1 \
            || { cat "$dir/initdb.log" >&2; return 1; }
    fi
    local opts="-c listen_addresses=127.0.0.1 -p $port -k $dir -c max_connections=200"
    if [ "$mode" = throwaway ]; then
        opts="$opts -c fsync=off -c synchronous_commit=off -c full_page_writes=off"
    else
        # Durable, with memory for bulk loads: a 100,000-event batch writes ~100 MB of WAL and index pages.
        opts="$opts -c shared_buffers=512MB -c wal_buffers=16MB -c max_wal_size=2GB"
    fi
    as_pg "$PG_BIN/pg_ctl" -D "$dir/data" -l "$dir/server.log" -w -t 60 -o "$opts" start >/dev/null \
        || { cat "$dir/server.log" >&2; return 1; }
}

stop_cluster() {
    local dir=$1
    [ -f "$dir/data/postmaster.pid" ] && as_pg "$PG_BIN/pg_ctl" -D "$dir/data" -m fast -w stop >/dev/null 2>&1
    return 0
}
