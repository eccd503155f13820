#!/usr/bin/env bash
# slurm-local.sh runs a one-node Slurm cluster on this machine, so that the
# job-array recipes under scripts/slurm/ can be run and tested without a real
# cluster.
#
#   scripts/slurm-local.sh start    install what is missing, start munged,
#                                   slurmctld and slurmd, wait for the node
#   scripts/slurm-local.sh status   what runs, and what sinfo says (exit 3
#                                   when slurmctld or slurmd is not running)
#   scripts/slurm-local.sh stop     stop the daemons that start started
#
# start installs slurm-wlm and munge when missing (scripts/setup.sh), creates
# /etc/munge/munge.key when absent (mode 400, owner munge), starts munged as
# the munge user unless a munged already answers, writes slurm.conf for this
# host (one node with CPUs=$(nproc), one default partition "local"), starts
# slurmctld and slurmd and waits until sinfo shows the node idle. Everything
# of its own lives under one folder:
#
#   $SLURM_LOCAL_DIR   default /var/lib/canalstep-slurm
#     slurm.conf       the configuration; /etc/slurm/slurm.conf is made a
#                      symlink to it when that path is free (or already ours),
#                      otherwise export SLURM_CONF=$SLURM_LOCAL_DIR/slurm.conf
#     run/*.pid        PID files of the daemons this script started
#     log/*.log        daemon logs
#     state/           slurmctld state and the slurmd spool
#
# Environment: SLURM_LOCAL_DIR (above), SLURM_LOCAL_TIMEOUT (seconds to wait
# for the node, default 60), SLURM_LOCAL_MEMORY (the node's RealMemory in MB,
# default half the machine's memory, at most 8192).
#
# Both commands are idempotent: start when running checks the node and leaves
# the daemons alone (it restarts them only when slurm.conf changed); stop when
# nothing runs does nothing. stop cancels the jobs still queued or running
# first, and a start of slurmctld without a running slurmd clears the jobs
# of earlier runs (slurmctld -c): this cluster is for tests, not for work
# that must outlive it. stop ends only processes named in its own PID
# files, and only when their executable is the expected daemon. start and
# stop need root (the daemons run jobs as the submitting user).
set -euo pipefail

here=$(cd "$(dirname "$0")" && pwd)
dir=${SLURM_LOCAL_DIR:-/var/lib/canalstep-slurm}
timeout=${SLURM_LOCAL_TIMEOUT:-60}
conf="$dir/slurm.conf"
etc_conf=/etc/slurm/slurm.conf
marker="# written by canalstep scripts/slurm-local.sh"
node=$(hostname -s)

die() {
	echo "slurm-local: $*" >&2
	exit 1
}
say() { echo "slurm-local: $*"; }

need_root() {
	if [ "$(id -u)" -ne 0 ]; then
		die "'$1' needs root (it installs packages and starts munged, slurmctld and slurmd); run it as root or with sudo"
	fi
}

# alive NAME prints the PID recorded in run/NAME.pid when that process runs
# the executable /usr/sbin/NAME (so a reused PID is never taken for ours)
# and is not a zombie; it fails otherwise. Without root, where /proc/PID/exe
# is not readable, the process name stands in for the executable.
alive() {
	local pf="$dir/run/$1.pid" pid exe
	[ -s "$pf" ] || return 1
	pid=$(tr -dc '0-9' <"$pf")
	[ -n "$pid" ] || return 1
	# A killed daemon stays a zombie until it is reaped: not alive.
	case "$(awk '{print $3}' "/proc/$pid/stat" 2>/dev/null)" in '' | Z | X) return 1 ;; esac
	exe=$(readlink "/proc/$pid/exe" 2>/dev/null) || exe=$(cat "/proc/$pid/comm" 2>/dev/null) || return 1
	case "$exe" in
	"$1" | */"$1" | */"$1"-wlm | */"$1"" (deleted)" | */"$1"-wlm" (deleted)") echo "$pid" ;;
	*) return 1 ;;
	esac
}

# wait_gone PID SECONDS waits for PID to exit.
wait_gone() {
	local i
	for ((i = 0; i < $2 * 10; i++)); do
		kill -0 "$1" 2>/dev/null || return 0
		sleep 0.1
	done
	return 1
}

munge_answers() {
	munge -n 2>/dev/null | unmunge >/dev/null 2>&1
}

start_munge() {
	local key=/etc/munge/munge.key
	if [ ! -e "$key" ]; then
		say "creating $key"
		install -d -m 700 -o munge -g munge /etc/munge
		mungekey --create --keyfile="$key"
		chown munge:munge "$key"
		chmod 400 "$key"
	fi
	if munge_answers; then
		if alive munged >/dev/null; then
			say "munged already running (PID $(alive munged))"
		else
			say "a munged not started by this script answers; using it"
		fi
		return 0
	fi
	install -d -m 755 -o munge -g munge /run/munge
	install -d -m 700 -o munge -g munge /var/lib/munge /var/log/munge
	rm -f /run/munge/munged.pid
	runuser -u munge -- /usr/sbin/munged
	local i
	for ((i = 0; i < 50; i++)); do
		if [ -s /run/munge/munged.pid ] && munge_answers; then
			cp /run/munge/munged.pid "$dir/run/munged.pid"
			say "munged started (PID $(cat "$dir/run/munged.pid"))"
			return 0
		fi
		sleep 0.1
	done
	die "munged did not start; see /var/log/munge/munged.log"
}

# memory_mb prints the node's RealMemory: SLURM_LOCAL_MEMORY or half the
# machine's memory, at most 8192 MB. slurmd drains a node that has less
# memory than configured, so a modest figure keeps the node usable.
memory_mb() {
	if [ -n "${SLURM_LOCAL_MEMORY:-}" ]; then
		echo "$SLURM_LOCAL_MEMORY"
		return
	fi
	awk '/^MemTotal:/ { m = int($2 / 1024 / 2); if (m > 8192) m = 8192; print m }' /proc/meminfo
}

write_conf() {
	cat <<EOF
$marker
# A one-node cluster on $node for testing scripts/slurm/. Not for production.
ClusterName=canalstep-local
SlurmctldHost=$node(127.0.0.1)
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SchedulerType=sched/backfill
MpiDefault=none
MailProg=/bin/true
ReturnToService=2
SlurmdParameters=config_overrides
StateSaveLocation=$dir/state/ctld
SlurmdSpoolDir=$dir/state/d
SlurmctldPidFile=$dir/run/slurmctld.pid
SlurmdPidFile=$dir/run/slurmd.pid
SlurmctldLogFile=$dir/log/slurmctld.log
SlurmdLogFile=$dir/log/slurmd.log
SlurmctldDebug=info
SlurmdDebug=info
NodeName=$node NodeAddr=127.0.0.1 NodeHostname=$node CPUs=$(nproc) RealMemory=$(memory_mb) State=UNKNOWN
PartitionName=local Nodes=$node Default=YES MaxTime=INFINITE State=UP
EOF
}

# link_conf points /etc/slurm/slurm.conf at ours when that path is free or
# already ours, so that sbatch and sinfo find it without SLURM_CONF.
link_conf() {
	if [ -L "$etc_conf" ] || [ ! -e "$etc_conf" ]; then
		if [ ! -e "$etc_conf" ] || head -1 "$etc_conf" 2>/dev/null | grep -qxF "$marker"; then
			mkdir -p /etc/slurm
			ln -sfn "$conf" "$etc_conf"
			return 0
		fi
	fi
	say "$etc_conf belongs to another Slurm set-up; left alone"
	say "use this cluster with: export SLURM_CONF=$conf"
}

# node_state prints the node's state as sinfo has it, once the local slurmd
# answers too (sinfo alone shows a node idle for minutes after its slurmd
# died).
node_state() {
	SLURM_CONF=$conf timeout 3 scontrol show slurmd >/dev/null 2>&1 || return 0
	SLURM_CONF=$conf timeout 3 sinfo -h -n "$node" -o %T 2>/dev/null | head -1
}

cmd_start() {
	need_root start
	local t0=$SECONDS pid
	# shellcheck source=scripts/setup.sh
	source "$here/setup.sh"
	canalstep_need_pkgs slurm-wlm munge
	mkdir -p "$dir/run" "$dir/log" "$dir/state/ctld" "$dir/state/d"
	start_munge

	local new="$conf.new"
	write_conf >"$new"
	if [ -f "$conf" ] && cmp -s "$new" "$conf"; then
		rm -f "$new"
	else
		mv "$new" "$conf"
		if alive slurmctld >/dev/null || alive slurmd >/dev/null; then
			say "slurm.conf changed: restarting slurmctld and slurmd"
			stop_daemon slurmd
			stop_daemon slurmctld
		fi
	fi
	link_conf

	if pid=$(alive slurmctld); then
		say "slurmctld already running (PID $pid)"
	else
		# -c: a fresh start forgets the jobs of an earlier run. A job that
		# ran when that run ended (killed, or stopped under a running job)
		# would be recovered as still running, hold the node's CPUs for
		# minutes and leave every new job pending.
		local clear=()
		if ! alive slurmd >/dev/null; then clear=(-c); fi
		rm -f "$dir/run/slurmctld.pid"
		SLURM_CONF=$conf /usr/sbin/slurmctld "${clear[@]}" -f "$conf" ||
			die "slurmctld did not start; see $dir/log/slurmctld.log"
		say "slurmctld started${clear:+ (earlier jobs cleared)}"
	fi
	if pid=$(alive slurmd); then
		say "slurmd already running (PID $pid)"
	else
		rm -f "$dir/run/slurmd.pid"
		SLURM_CONF=$conf /usr/sbin/slurmd -f "$conf" -N "$node" ||
			die "slurmd did not start; see $dir/log/slurmd.log"
		say "slurmd started"
	fi

	local state="" deadline=$((SECONDS + timeout))
	while :; do
		state=$(node_state)
		case "$state" in
		idle | mixed | allocated) break ;;
		esac
		[ "$SECONDS" -lt "$deadline" ] || break
		sleep 0.2
	done
	case "$state" in
	idle | mixed | allocated) ;;
	*)
		echo "slurm-local: node $node is '${state:-unknown: slurmd does not answer}' after ${timeout}s, not idle" >&2
		echo "slurm-local: last lines of $dir/log/slurmctld.log and slurmd.log:" >&2
		tail -n 5 "$dir/log/slurmctld.log" "$dir/log/slurmd.log" >&2 2>/dev/null || true
		exit 1
		;;
	esac
	say "node $node is $state ($(nproc) CPUs, $(memory_mb) MB); ready in $((SECONDS - t0)) s"
	say "config $conf (SLURM_CONF); logs in $dir/log"
}

# stop_daemon NAME sends SIGTERM to the daemon of run/NAME.pid, waits up to
# 30 s for it to exit, and removes the PID file.
stop_daemon() {
	local pid
	if pid=$(alive "$1"); then
		kill -TERM "$pid"
		if ! wait_gone "$pid" 30; then
			die "$1 (PID $pid) did not exit within 30 s of SIGTERM"
		fi
		say "$1 stopped (PID $pid)"
	fi
	rm -f "$dir/run/$1.pid"
}

# cancel_jobs cancels every job of the cluster, when slurmctld runs, and
# waits up to 20 s for them to end, so that stop leaves no job behind for
# the next start.
cancel_jobs() {
	alive slurmctld >/dev/null || return 0
	local ids i
	ids=$(SLURM_CONF=$conf timeout 5 squeue -h -o %A 2>/dev/null | sort -u | tr '\n' ' ')
	[ -n "${ids// /}" ] || return 0
	say "cancelling the jobs still queued or running: $ids"
	# shellcheck disable=SC2086 # a list of job IDs
	SLURM_CONF=$conf timeout 10 scancel $ids 2>/dev/null || true
	for ((i = 0; i < 100; i++)); do
		[ -z "$(SLURM_CONF=$conf timeout 5 squeue -h -o %A 2>/dev/null)" ] && return 0
		sleep 0.2
	done
	say "some jobs had not ended 20 s after scancel; the next start clears them"
}

cmd_stop() {
	need_root stop
	if [ ! -d "$dir/run" ]; then
		say "nothing to stop ($dir/run does not exist)"
		return 0
	fi
	local any=0 d
	cancel_jobs
	for d in slurmd slurmctld munged; do
		if alive "$d" >/dev/null; then any=1; fi
		stop_daemon "$d"
	done
	if [ "$any" = 0 ]; then say "nothing was running"; fi
}

cmd_status() {
	local d pid rc=0
	if pid=$(alive munged); then
		say "munged running (PID $pid)"
	elif munge_answers; then
		say "munged running (not started by this script)"
	else
		say "munged not running"
	fi
	for d in slurmctld slurmd; do
		if pid=$(alive "$d"); then
			say "$d running (PID $pid)"
		else
			say "$d not running"
			rc=3
		fi
	done
	if [ -f "$conf" ] && alive slurmctld >/dev/null; then
		SLURM_CONF=$conf sinfo
	fi
	return "$rc"
}

case "${1:-}" in
start) cmd_start ;;
stop) cmd_stop ;;
status) cmd_status ;;
*)
	echo "usage: scripts/slurm-local.sh start|stop|status" >&2
	exit 2
	;;
esac
