#!/usr/bin/env bash
# loadbench.sh — how fast termgrove loads a large SKOS vocabulary, against
# Debian's rapper (raptor2-utils) parsing and counting the same file in the
# same run, with peak memory. Writes bench/load.md.
#
#   bash scripts/loadbench.sh            # 5 alternating runs per tool and file
#   RUNS=9 bash scripts/loadbench.sh
#
# The vocabulary is WordNet 3.0 as SKOS (117,661 concepts, 705,683 triples),
# built under .cache/wordnet by ../shared/datasets/wordnet/build.sh.
# The machine is shared and noisy: runs alternate termgrove and rapper so
# both see the same load, and the report gives medians, minima and CPU time.
set -euo pipefail
cd "$(dirname "$0")/.."

RUNS=${RUNS:-5}
data=.cache/wordnet
work=.cache/loadbench
report=bench/load.md
build_sh=${WORDNET_BUILD:-../shared/datasets/wordnet/build.sh}

need() { # need COMMAND DEBIAN-PACKAGE
	if ! command -v "$1" >/dev/null 2>&1; then
		echo "installing $2 (for $1)" >&2
		apt-get install -y "$2" >/dev/null || { echo "loadbench: need $1 (apt-get install $2)" >&2; exit 2; }
	fi
}
need rapper raptor2-utils
[ -x /usr/bin/time ] || need /usr/bin/time time

if [ ! -s "$data/vocabulary.ttl" ]; then
	echo "building the WordNet vocabulary in $data" >&2
	bash "$build_sh" "$data" >&2
fi

mkdir -p "$work" bench
tg=$work/termgrove
go build -o "$tg" ./cmd/termgrove

# measure NAME OUTFILE CMD... — one run; appends "name wall user sys rss_kb" to $work/runs.
measure() {
	local name=$1 out=$2
	shift 2
	/usr/bin/time -f "%e %U %S %M" -o "$work/time.txt" "$@" >"$out" 2>"$work/stderr.txt" || true
	echo "$name $(tail -1 "$work/time.txt")" >>"$work/runs"
}

: >"$work/runs"
: >"$work/loads"
load_start=$(cut -d' ' -f1-3 /proc/loadavg)
for f in ttl nt rdf; do
	file=$data/vocabulary.$f
	for ((i = 1; i <= RUNS; i++)); do
		measure "rapper-$f" "$work/rapper.out" rapper -i "$(case $f in ttl) echo turtle ;; nt) echo ntriples ;; rdf) echo rdfxml ;; esac)" -c "$file"
		cp "$work/stderr.txt" "$work/count-rapper-$f.txt"
		measure "termgrove-$f" "$work/check-$f.txt" "$tg" check --timing --max 5 "$file"
		# "load 1.234s check 0.456s (705683 triples, 117661 concepts; cpu load 0.7s check 0.2s)"
		awk -v f="$f" '/^load /{sub("s","",$2); sub("s","",$4); sub("s","",$11); print f, $2, $4, $11}' "$work/stderr.txt" >>"$work/loads"
	done
done
load_end=$(cut -d' ' -f1-3 /proc/loadavg)

# Go benchmarks on a generated 20,000-concept Turtle document.
go test -run '^$' -bench 'BenchmarkLoad$|BenchmarkBuild$' -benchtime 10x ./concepts >"$work/gobench.txt" 2>&1 || true

# Same graph: termgrove's --emit ntriples against rapper's N-Triples, sorted.
# (WordNet has no blank nodes, so sorted lines compare graphs exactly.)
: >"$work/samegraph"
for f in ttl nt rdf; do
	in=$(case $f in ttl) echo turtle ;; nt) echo ntriples ;; rdf) echo rdfxml ;; esac)
	"$tg" check --emit ntriples "$data/vocabulary.$f" | LC_ALL=C sort >"$work/ours.nt"
	rapper -q -i "$in" -o ntriples "$data/vocabulary.$f" | LC_ALL=C sort >"$work/rapper.nt"
	if cmp -s "$work/ours.nt" "$work/rapper.nt"; then
		echo "| vocabulary.$f | $(wc -l <"$work/ours.nt") | $(wc -l <"$work/rapper.nt") | identical |" >>"$work/samegraph"
	else
		echo "| vocabulary.$f | $(wc -l <"$work/ours.nt") | $(wc -l <"$work/rapper.nt") | DIFFERENT ($(diff "$work/ours.nt" "$work/rapper.nt" | grep -c '^[<>]') lines) |" >>"$work/samegraph"
	fi
	rm -f "$work/ours.nt" "$work/rapper.nt"
done

# median COLUMN-VALUES... / minimum, on numbers one per line.
median() { sort -n | awk '{v[NR]=$1} END {if (NR==0) print "-"; else if (NR%2) print v[(NR+1)/2]; else printf "%.3f\n", (v[NR/2]+v[NR/2+1])/2}'; }
minimum() { sort -n | head -1; }
stats() { # stats NAME -> "median_wall min_wall median_cpu max_rss_mib"
	local rows
	rows=$(awk -v n="$1" '$1==n {print $2, $3+$4, $5}' "$work/runs")
	echo "$(cut -d' ' -f1 <<<"$rows" | median) $(cut -d' ' -f1 <<<"$rows" | minimum)" \
		"$(cut -d' ' -f2 <<<"$rows" | median) $(cut -d' ' -f3 <<<"$rows" | sort -n | tail -1 | awk '{printf "%.0f", $1/1024}')"
}
loadstats() { # loadstats FORMAT -> "median_load min_load median_check median_load_cpu"
	local rows
	rows=$(awk -v f="$1" '$1==f {print $2, $3, $4}' "$work/loads")
	echo "$(cut -d' ' -f1 <<<"$rows" | median) $(cut -d' ' -f1 <<<"$rows" | minimum)" \
		"$(cut -d' ' -f2 <<<"$rows" | median) $(cut -d' ' -f3 <<<"$rows" | median)"
}

{
	echo "# Vocabulary loading: termgrove vs rapper"
	echo
	echo "Written by \`bash scripts/loadbench.sh\` (RUNS=$RUNS) on $(date -u '+%Y-%m-%d %H:%M UTC'),"
	echo "commit $(git describe --always --dirty 2>/dev/null || echo unknown)."
	echo
	echo "Machine: $(nproc) cores ($(awk -F': ' '/model name/{print $2; exit}' /proc/cpuinfo)), shared with other"
	echo "jobs — load average $load_start at the start, $load_end at the end. Wall times"
	echo "on a loaded machine vary by 2x between runs; the runs alternate the two tools"
	echo "so each ratio compares times measured side by side, and CPU time (user+sys) is"
	echo "given as the steadier figure."
	echo
	echo "Data: WordNet 3.0 as SKOS from \`../shared/datasets/wordnet/build.sh\`"
	echo "(117,661 concepts, 705,683 triples; Turtle 27.6 MiB, N-Triples 81.2 MiB, RDF/XML 59.8 MiB)."
	echo
	echo "Commands, each run $RUNS times under \`/usr/bin/time -f '%e %U %S %M'\`:"
	echo
	echo '```'
	echo "rapper -i turtle|ntriples|rdfxml -c .cache/wordnet/vocabulary.{ttl,nt,rdf}"
	echo "termgrove check --timing --max 5 .cache/wordnet/vocabulary.{ttl,nt,rdf}"
	echo '```'
	echo
	echo "\`termgrove check\` loads the file into a \`concepts.Scheme\` (parse, build labels,"
	echo "hierarchy, depths), then runs every check and prints the summary; \`--timing\`"
	echo "reports the load and check phases separately (wall and CPU time, from"
	echo "getrusage). rapper only parses and counts. termgrove's loader runs the parser"
	echo "and the scheme builder on two goroutines, so its wall time can be below its"
	echo "CPU time when a second core is free."
	echo
	echo "| file | rapper wall median / min (s) | termgrove whole run median / min (s) | termgrove load only median / min (s) | check phase median (s) | load ÷ rapper wall (median, min) | CPU s (median): rapper / termgrove load / termgrove whole run | peak RSS rapper / termgrove (MiB) |"
	echo "|---|---|---|---|---|---|---|---|"
	for f in ttl nt rdf; do
		read -r rw rmin rc rr <<<"$(stats "rapper-$f")"
		read -r tw tmin tc tr <<<"$(stats "termgrove-$f")"
		read -r lm lmin km lc <<<"$(loadstats "$f")"
		ratio=$(awk -v a="$lm" -v b="$rw" -v c="$lmin" -v d="$rmin" 'BEGIN{ if (a=="-" || b=="-") print "-"; else printf "%.2f, %.2f", a/b, c/d }')
		echo "| vocabulary.$f | $rw / $rmin | $tw / $tmin | $lm / $lmin | $km | $ratio | $rc / $lc / $tc | $rr / $tr |"
	done
	echo
	echo "Targets (issue 2): Turtle load ≤ rapper's parse+count time; peak memory < 1 GiB."
	read -r rw rmin rc rr <<<"$(stats rapper-ttl)"
	read -r tw tmin tc tr <<<"$(stats termgrove-ttl)"
	read -r lm lmin km lc <<<"$(loadstats ttl)"
	awk -v lm="$lm" -v rw="$rw" -v lc="$lc" -v rc="$rc" -v tr="$tr" 'BEGIN {
		printf "Result on Turtle: load %s s vs rapper %s s wall (median, ratio %.2f: %s); load CPU %s s vs rapper %s s (ratio %.2f); peak RSS %s MiB (%s).\n",
			lm, rw, lm/rw, (lm <= rw ? "met" : "NOT met"), lc, rc, lc/rc, tr, (tr < 1024 ? "met" : "NOT met") }'

	echo
	echo "Triple counts: rapper says"
	for f in ttl nt rdf; do
		echo "$f: $(grep -o 'returned [0-9]* triples' "$work/count-rapper-$f.txt" || echo '?'),"
	done | tr '\n' ' ' | sed 's/, $/./'
	echo " termgrove's first line of each summary:"
	echo
	echo '```'
	for f in ttl nt rdf; do head -1 "$work/check-$f.txt"; done
	echo '```'
	echo
	echo "## Go benchmarks"
	echo
	echo "\`go test -run '^\$' -bench 'BenchmarkLoad\$|BenchmarkBuild\$' -benchtime 10x ./concepts\`"
	echo "(BenchmarkLoad: parse + build a generated 20,000-concept Turtle document;"
	echo "BenchmarkBuild: the builder alone on the same triples held in memory):"
	echo
	echo '```'
	grep -E '^(Benchmark|cpu:)' "$work/gobench.txt" || cat "$work/gobench.txt"
	echo '```'
	echo
	echo "## Same graph as rapper"
	echo
	echo "\`termgrove check --emit ntriples FILE | LC_ALL=C sort\` against"
	echo "\`rapper -q -i SYNTAX -o ntriples FILE | LC_ALL=C sort\`:"
	echo
	echo "| file | termgrove triples | rapper triples | sorted N-Triples |"
	echo "|---|---|---|---|"
	cat "$work/samegraph"
	echo
	echo "## \`termgrove check\` on the large vocabulary (Turtle)"
	echo
	echo '```'
	cat "$work/check-ttl.txt"
	echo '```'
	echo
	echo "The figures match the dataset's README (117,661 concepts, 562 top concepts,"
	echo "2,244 with more than one broader, max depth 19, 89,319 altLabels). The README"
	echo "counts 15,346 prefLabel strings shared by several concepts; check compares"
	echo "labels case-insensitively and so finds 15,629 (both numbers recounted with"
	echo "Python over vocabulary.nt; TestWordNetFigures in concepts/ asserts them)."
} >"$report"
cat "$report"
