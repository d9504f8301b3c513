#!/usr/bin/env bash
# Regenerates the Go code of proto/ with buf and LOCAL protoc plugins (no
# remote plugin or schema registry is reachable).
#
#   scripts/proto.sh           install missing tools, lint, regenerate
#   scripts/proto.sh --check   install missing tools, lint, fail when the
#                              committed generated code is stale, and run
#                              buf breaking against the previous commit
#                              (skipped when that commit has no .proto yet)
set -euo pipefail
cd "$(dirname "$0")/.."

BUF_VERSION=v1.75.0
PROTOC_GEN_GO_VERSION=v1.36.12
PROTOC_GEN_GO_GRPC_VERSION=v1.6.2

export PATH="$(go env GOPATH)/bin:$PATH"

# need NAME VERSION-STRING MODULE@VERSION: install when missing or another version.
need() {
  local name=$1 want=$2 mod=$3
  if ! command -v "$name" >/dev/null || ! "$name" --version 2>&1 | grep -qF "$want"; then
    echo "proto: installing $mod"
    go install "$mod"
  fi
}
need buf "${BUF_VERSION#v}" "github.com/bufbuild/buf/cmd/buf@$BUF_VERSION"
need protoc-gen-go "$PROTOC_GEN_GO_VERSION" "google.golang.org/protobuf/cmd/protoc-gen-go@$PROTOC_GEN_GO_VERSION"
need protoc-gen-go-grpc "${PROTOC_GEN_GO_GRPC_VERSION#v}" "google.golang.org/grpc/cmd/protoc-gen-go-grpc@$PROTOC_GEN_GO_GRPC_VERSION"

buf lint

if [ "${1:-}" != "--check" ]; then
  buf generate
  echo "proto: regenerated"
  exit 0
fi

tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

# Stale check: generate into a scratch tree and compare with the committed files.
buf generate -o "$tmp/gen"
stale=0
for f in $(cd "$tmp/gen" && find proto -name '*.go' | sort); do
  if ! cmp -s "$tmp/gen/$f" "$f"; then
    echo "proto: $f is stale (run: make proto)"; stale=1
  fi
done
for f in $(find proto -name '*.pb.go' | sort); do
  [ -f "$tmp/gen/$f" ] || { echo "proto: $f has no .proto any more"; stale=1; }
done
[ $stale = 0 ] || exit 1
echo "proto: generated code is up to date"

# Breaking-change check against the previous commit, once it has a schema.
if git rev-parse -q --verify HEAD~1 >/dev/null &&
   git cat-file -e HEAD~1:buf.yaml 2>/dev/null &&
   [ -n "$(git ls-tree -r --name-only HEAD~1 -- proto | grep '\.proto$' || true)" ]; then
  git archive HEAD~1 buf.yaml proto | tar -x -C "$tmp" -f - --exclude='*.go'
  mkdir -p "$tmp/prev"
  (cd "$tmp" && mv buf.yaml proto prev/)
  buf breaking --against "$tmp/prev"
  echo "proto: no breaking change against HEAD~1"
else
  echo "proto: buf breaking skipped: HEAD~1 has no schema yet"
fi
