#!/usr/bin/env bash
# rdfcompare.sh — compare termgrove's RDF readers with Debian's rapper
# (package raptor2-utils) on the ~117k-concept WordNet SKOS vocabulary in
# Turtle, N-Triples and RDF/XML, plus a second RDF/XML form that rapper's
# rdfxml-abbrev writer makes from the Turtle (typed node elements instead of
# rdf:Description, so the other branch of the grammar is exercised at scale).
#
# For each form it checks that `termgrove check --emit ntriples FILE` and
# `rapper -o ntriples FILE` give the same triple count and the same graph,
# then times rapper's parse-and-count (`rapper -c`) against termgrove's
# parse-and-count (scripts/rdfcompare `count`), alternating runs.
#
#   bash scripts/rdfcompare.sh [RUNS]     # RUNS timing rounds per form, default 3
#
# Output: a Markdown report on stdout (paste into bench/rdf-compare.md);
# intermediate files in .cache/rdfcompare/. Exit status 1 if any form differs.
set -euo pipefail

cd "$(dirname "$0")/.."
runs=${1:-3}
wn=.cache/wordnet
work=.cache/rdfcompare
mkdir -p "$work"

command -v rapper >/dev/null || { echo "rapper not found: apt-get install -y raptor2-utils" >&2; exit 2; }
if [ ! -s "$wn/vocabulary.rdf" ] || [ ! -s "$wn/stats.txt" ]; then
	bash ../shared/datasets/wordnet/build.sh "$wn" >&2
fi

if [ ! -s "$work/vocabulary-abbrev.rdf" ]; then
	rapper -q -i turtle -o rdfxml-abbrev "$wn/vocabulary.ttl" >"$work/vocabulary-abbrev.rdf"
fi
go build -o "$work/rdfcompare" ./scripts/rdfcompare
# termgrove's own emitter when the command builds; the helper (same readers)
# otherwise, and the report says which one ran.
if go build -o bin/termgrove ./cmd/termgrove 2>"$work/build.log" &&
	bin/termgrove check --help 2>&1 | grep -q -- --emit; then
	emitter="bin/termgrove check --emit ntriples"
else
	emitter="$work/rdfcompare emit"
fi

# wall-clock seconds of a command, output discarded
seconds() {
	local t0 t1
	t0=$(date +%s.%N)
	"$@" >/dev/null
	t1=$(date +%s.%N)
	echo "$t0 $t1" | awk '{printf "%.2f", $2 - $1}'
}

# peak resident memory in MiB of a command, output discarded
peak_mib() {
	/usr/bin/time -f '%M' -o "$work/time.txt" "$@" >/dev/null
	awk '{printf "%d", $1 / 1024}' "$work/time.txt"
}

median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }

echo "# termgrove RDF readers vs rapper"
echo
echo "- date: $(date -u +%Y-%m-%dT%H:%MZ)"
echo "- machine: $(nproc) cores, $(awk '/MemTotal/ {printf "%.1f GiB", $2/1048576}' /proc/meminfo), shared and noisy"
echo "- rapper: $(rapper --version)"
echo "- termgrove: $(git describe --always --dirty 2>/dev/null || echo dev)"
echo "- command: bash scripts/rdfcompare.sh $runs"
echo "- termgrove triples written by: \`$emitter FILE\`; timed: \`rdfcompare count FILE\` (parse and count) vs \`rapper -q -c -i SYNTAX FILE\`"
echo
echo "| form | file size | rapper triples | termgrove triples | same graph | rapper s (median of runs) | termgrove s (median of runs) | termgrove/rapper time | rapper peak MiB | termgrove peak MiB |"
echo "| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |"

status=0
for form in ttl nt rdf abbrev; do
	file=$wn/vocabulary.$form
	case $form in
	ttl) syntax=turtle ;;
	nt) syntax=ntriples ;;
	rdf) syntax=rdfxml ;;
	abbrev) syntax=rdfxml file=$work/vocabulary-abbrev.rdf ;;
	esac
	rapper -q -i "$syntax" -o ntriples "$file" >"$work/rapper.$form.nt"
	$emitter "$file" >"$work/termgrove.$form.nt"
	if "$work/rdfcompare" compare "$work/rapper.$form.nt" "$work/termgrove.$form.nt" >"$work/compare.$form.txt"; then
		same=yes
	else
		same=NO
		status=1
	fi
	rcount=$(rapper -c -i "$syntax" "$file" 2>&1 | grep -o 'returned [0-9]* triple' | grep -o '[0-9]*' || true)
	ocount=$("$work/rdfcompare" count "$file" | awk '{print $2}')
	rt=() ot=()
	for _ in $(seq "$runs"); do
		rt+=("$(seconds rapper -q -c -i "$syntax" "$file")")
		ot+=("$(seconds "$work/rdfcompare" count "$file")")
	done
	rmed=$(printf '%s\n' "${rt[@]}" | median)
	omed=$(printf '%s\n' "${ot[@]}" | median)
	ratio=$(awk -v o="$omed" -v r="$rmed" 'BEGIN {printf "%.2f", o / r}')
	rmem=$(peak_mib rapper -q -c -i "$syntax" "$file")
	omem=$(peak_mib "$work/rdfcompare" count "$file")
	size=$(du -m "$file" | cut -f1)
	echo "| $form | ${size} MB | $rcount | $ocount | $same | $rmed (${rt[*]}) | $omed (${ot[*]}) | $ratio | $rmem | $omem |"
done
echo
echo "Graph comparison details (.cache/rdfcompare/compare.*.txt):"
echo
for form in ttl nt rdf abbrev; do
	echo '```'
	cat "$work/compare.$form.txt"
	echo '```'
done
exit $status
