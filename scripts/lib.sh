# Shared shell functions for scripts/start.sh and scripts/test.sh (sourced, not run).
# Everything listens on 127.0.0.1 only; the system MariaDB service is never started.

if [ -t 1 ]; then _SG_B=$'\033[1m' _SG_Y=$'\033[1;33m' _SG_R=$'\033[1;31m' _SG_0=$'\033[0m'
else _SG_B='' _SG_Y='' _SG_R='' _SG_0=''
fi
log() { printf '%s[shellgate]%s %s\n' "$_SG_B" "$_SG_0" "$*"; }
warn() { printf '%s[shellgate]%s %s\n' "$_SG_Y" "$_SG_0" "$*" >&2; }
die() { printf '%s[shellgate]%s %s\n' "$_SG_R" "$_SG_0" "$*" >&2; exit 1; }

# glibc malloc settings for the app, the check workers and the tests (the bench sets the same in
# scripts/bench.ts). A check allocates a few hundred MB of typed arrays; by default glibc hands
# chunks that large straight back to the kernel, and every later check faults them in again
# (12-16 µs per 4 KB page on small VMs). One arena and chunks up to 32 MB from the heap let a warm
# engine thread reuse its pages: measured on 2 cores, warm 1 M-face checks went from 9,000-35,000
# page faults each to a few hundred, median 1,089 → 975 ms. Freed memory over 128 MB at the top of
# the heap goes back to the system: against 1 GB kept, the app held 361 instead of 752 MB 9 s
# after a 1 M check, at no measurable cost to warm 90 k or 1 M checks (README, "Engine bench").
export MALLOC_ARENA_MAX=${MALLOC_ARENA_MAX:-1}
export MALLOC_MMAP_THRESHOLD_=${MALLOC_MMAP_THRESHOLD_:-33554432}
export MALLOC_TRIM_THRESHOLD_=${MALLOC_TRIM_THRESHOLD_:-134217728}

now_s() { printf '%s' "${EPOCHREALTIME:-$(date +%s)}"; }
# elapsed seconds since a now_s value, one decimal
since() { awk -v a="$1" -v b="$(now_s)" 'BEGIN { printf "%.1f", b - a }'; }

as_root() {
	if [ "$(id -u)" = 0 ]; then "$@"
	elif command -v sudo >/dev/null 2>&1; then sudo "$@"
	else die "need root to run: $* (run as root, or install the package by hand)"
	fi
}

_SG_APT_UPDATED=0
apt_install() {
	command -v apt-get >/dev/null 2>&1 || die "apt-get not found; install $* by hand"
	if [ "$_SG_APT_UPDATED" = 0 ]; then
		log "apt-get update"
		as_root apt-get update -qq
		_SG_APT_UPDATED=1
	fi
	log "apt-get install $*"
	as_root env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "$@"
}

# npm ci when node_modules is missing or older than package-lock.json. npm writes
# node_modules/.package-lock.json last on every install, so that file dates the tree.
ensure_npm_packages() {
	if [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
		local t0; t0=$(now_s)
		log "npm ci (node_modules missing or older than package-lock.json)"
		npm ci --no-audit --no-fund
		log "npm ci took $(since "$t0") s"
	fi
}

mariadbd_bin() {
	command -v mariadbd 2>/dev/null || { [ -x /usr/sbin/mariadbd ] && echo /usr/sbin/mariadbd; }
}

# Installs mariadb-server without letting the package start the system service: a temporary
# policy-rc.d (exit 101 = "action forbidden") is honoured by invoke-rc.d and deb-systemd-invoke.
ensure_mariadb() {
	[ -n "$(mariadbd_bin)" ] && return 0
	local added_policy=0
	if [ ! -e /usr/sbin/policy-rc.d ]; then
		as_root sh -c 'printf "#!/bin/sh\nexit 101\n" > /usr/sbin/policy-rc.d && chmod 755 /usr/sbin/policy-rc.d'
		added_policy=1
	fi
	apt_install mariadb-server || { [ "$added_policy" = 1 ] && as_root rm -f /usr/sbin/policy-rc.d; die "installing mariadb-server failed"; }
	[ "$added_policy" = 1 ] && as_root rm -f /usr/sbin/policy-rc.d
	[ -n "$(mariadbd_bin)" ] || die "mariadb-server installed but no mariadbd binary found"
}

ensure_chromium() {
	[ -x /usr/bin/chromium ] || apt_install chromium
	[ -x /usr/bin/chromium ] || die "chromium installed but /usr/bin/chromium is missing"
}

# True when something accepts TCP connections on 127.0.0.1:$1.
port_open() { (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }

# First port from $1 upwards (up to 50 tries) with nothing listening.
free_port() {
	local p=$1 end=$(($1 + 50))
	while [ "$p" -lt "$end" ]; do
		port_open "$p" || { echo "$p"; return 0; }
		p=$((p + 1))
	done
	die "no free port in $1..$end"
}

# wait_port PORT PID NAME [TIMEOUT_S]: until the port accepts connections; returns 1 if PID dies.
wait_port() {
	local port=$1 pid=$2 name=$3 tries=$((${4:-30} * 10))
	while ! port_open "$port"; do
		kill -0 "$pid" 2>/dev/null || { warn "$name exited before listening on 127.0.0.1:$port"; return 1; }
		tries=$((tries - 1))
		[ "$tries" -gt 0 ] || { warn "$name did not listen on 127.0.0.1:$port in time"; return 1; }
		sleep 0.1
	done
}

# stop_pid PID NAME [TIMEOUT_S]: SIGTERM, wait up to TIMEOUT_S (30), then SIGKILL.
stop_pid() {
	local pid=$1 name=$2 limit=$((${3:-30} * 10)) i=0
	[ -n "$pid" ] || return 0
	kill -0 "$pid" 2>/dev/null || return 0
	kill -TERM "$pid" 2>/dev/null || true
	while kill -0 "$pid" 2>/dev/null; do
		i=$((i + 1))
		if [ "$i" -gt "$limit" ]; then
			warn "$name (pid $pid) was still running ${3:-30} s after SIGTERM; killing it"
			kill -KILL "$pid" 2>/dev/null || true
			break
		fi
		sleep 0.1
	done
	wait "$pid" 2>/dev/null || true
	log "stopped $name"
}

# MariaDB socket paths must stay under 108 bytes; fall back to /tmp when the checkout path is long.
short_socket_path() {
	local want=$1
	if [ "${#want}" -le 100 ]; then echo "$want"
	else echo "/tmp/shellgate-$(printf '%s' "$want" | cksum | cut -d' ' -f1).sock"
	fi
}

# db_init DIR: a fresh data directory unless DIR already holds one (DIR/data, logs beside it).
db_init() {
	local dir=$1
	if [ -d "$dir/data/mysql" ]; then return 0; fi
	mkdir -p "$dir/data"
	local t0; t0=$(now_s)
	if ! mariadb-install-db --no-defaults --user=root --datadir="$dir/data" \
		--auth-root-authentication-method=socket --skip-test-db >"$dir/install.log" 2>&1; then
		cat "$dir/install.log" >&2
		die "mariadb-install-db failed (log: $dir/install.log)"
	fi
	log "initialised MariaDB data directory $dir/data in $(since "$t0") s"
}

# db_start DIR SOCKET PORT: starts mariadbd on DIR/data, or reuses the one whose pid file is alive.
# Sets DB_PID.
db_start() {
	local dir=$1 sock=$2 port=$3 pidfile="$1/mariadbd.pid"
	DB_PID=
	if [ -f "$pidfile" ]; then
		local old; old=$(cat "$pidfile" 2>/dev/null || true)
		if [ -n "$old" ] && kill -0 "$old" 2>/dev/null && tr '\0' ' ' <"/proc/$old/cmdline" 2>/dev/null | grep -q -- "--datadir=$dir/data"; then
			log "reusing the MariaDB already running on $dir/data (pid $old)"
			DB_PID=$old
			db_wait "$sock" "$DB_PID"
			return 0
		fi
	fi
	port_open "$port" && die "port $port is already in use; set DB_PORT to a free port or DATABASE_URL to use an existing server"
	local t0; t0=$(now_s)
	"$(mariadbd_bin)" --no-defaults --datadir="$dir/data" --socket="$sock" --port="$port" \
		--bind-address=127.0.0.1 --user=root --pid-file="$pidfile" --log-error="$dir/error.log" \
		--skip-name-resolve --character-set-server=utf8mb4 --collation-server=utf8mb4_unicode_ci \
		</dev/null >/dev/null 2>&1 &
	DB_PID=$!
	db_wait "$sock" "$DB_PID" || { tail -n 30 "$dir/error.log" >&2; die "MariaDB did not start (log: $dir/error.log)"; }
	log "MariaDB ready on 127.0.0.1:$port in $(since "$t0") s (pid $DB_PID)"
}

# db_wait SOCKET PID: ping over the socket for up to 30 s.
db_wait() {
	local sock=$1 pid=$2 tries=300
	until mariadb-admin --no-defaults --socket="$sock" -u root ping >/dev/null 2>&1; do
		kill -0 "$pid" 2>/dev/null || return 1
		tries=$((tries - 1))
		[ "$tries" -gt 0 ] || return 1
		sleep 0.1
	done
}

db_stop() {
	stop_pid "${DB_PID:-}" MariaDB
	DB_PID=
}

sql_quote() { printf '%s' "$1" | sed -e "s/\\\\/\\\\\\\\/g" -e "s/'/''/g"; }
url_encode() { node -e 'process.stdout.write(encodeURIComponent(process.argv[1]))' "$1"; }

# db_create SOCKET DB_NAME USER PASSWORD [GRANT_PATTERN]: idempotent; the user logs in over TCP
# from 127.0.0.1 (MariaDB matches TCP logins to @'127.0.0.1', not @'localhost').
db_create() {
	local sock=$1 name=$2 user=$3 pw grant=${5:-$2}
	pw=$(sql_quote "$4")
	mariadb --no-defaults --socket="$sock" -u root <<-SQL
		CREATE DATABASE IF NOT EXISTS \`$name\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
		CREATE USER IF NOT EXISTS '$user'@'127.0.0.1' IDENTIFIED BY '$pw';
		ALTER USER '$user'@'127.0.0.1' IDENTIFIED BY '$pw';
		GRANT ALL PRIVILEGES ON \`$grant\`.* TO '$user'@'127.0.0.1';
	SQL
}

# run_ts FILE ARGS: TypeScript through tsx's loader in one node process (no npx/tsx wrapper).
# Background services are started as `node --import tsx FILE &` directly, never through this
# function, so that $! is node itself and SIGTERM reaches it.
run_ts() { node --import tsx "$@"; }

# vite_build ARGS: vite build without rolldown's flood of circular-import notes from dependencies.
vite_build() {
	local out rc=0
	out=$(mktemp)
	npx vite build "$@" >"$out" 2>&1 || rc=$?
	grep -v -e '^Circular dependency: node_modules/' -e '^`config.kit.csrf.checkOrigin` has been deprecated' "$out" || true
	rm -f "$out"
	return "$rc"
}
