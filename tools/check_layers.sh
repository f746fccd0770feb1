#!/bin/sh
# tools/check_layers.sh - the library's layering, checked from #include lines.
#
# The folders of src/ are layers, bottom to top, in the order of LAYERS; a
# file may include internal headers ("L/x_internal.h") of its own layer or
# of lower ones, and public headers ("tram/x.h") of its own layer or lower
# ones (PUBLIC gives each public header's layer).  The command (src/cli)
# includes only public headers and its own.  Inside a layer, module x is
# x.c with its header x_internal.h; the graph "module a includes module b's
# header" must have no cycle (checked with tsort).  A header without a
# module of its name (core/tram_internal.h, solve/handeye_internal.h) is a
# leaf.  docs/architecture.md explains the layers.
#
# Usage: sh tools/check_layers.sh [ROOT]     exit 0: clean, 1: violations.
set -u
root=${1:-.}
cd "$root" || exit 2

LAYERS="core math io image camera register chain solve check plan plot report"
PUBLIC="common:core fileio:core so3:math se3:math rotation:math records:io points:io
pixels:io image:image camera:camera register:register register_json:register chain:chain handeye:solve
solve:solve point_solve:solve pixel_solve:solve pose:camera check:check plan:plan plot:plot report:report"

rank() { # rank LAYER -> position in LAYERS, or nothing
    i=0
    for l in $LAYERS; do
        i=$((i + 1))
        [ "$l" = "$1" ] && { echo "$i"; return; }
    done
}
public_layer() {
    for p in $PUBLIC; do
        [ "${p%%:*}" = "$1" ] && { echo "${p#*:}"; return; }
    done
}

bad=0
fail() { echo "layers: $*" >&2; bad=1; }

# includes FILE -> the quoted include targets, one a line
includes() { sed -n 's/^[[:space:]]*#[[:space:]]*include[[:space:]]*"\([^"]*\)".*/\1/p' "$1"; }

# 1. library files and the public headers they include
for d in src/*/; do
    layer=$(basename "$d")
    [ "$layer" = cli ] && continue
    r=$(rank "$layer")
    if [ -z "$r" ]; then fail "src/$layer/ is not a layer: add it to LAYERS in tools/check_layers.sh"; continue; fi
    for f in "$d"*.c "$d"*.h; do
        [ -f "$f" ] || continue
        for inc in $(includes "$f"); do
            case "$inc" in
            tram/*.h)
                name=$(basename "$inc" .h)
                [ "$name" = tram ] && { fail "$f: includes the umbrella header tram/tram.h"; continue; }
                pl=$(public_layer "$name")
                [ -z "$pl" ] && { fail "$f: public header $inc has no layer in tools/check_layers.sh"; continue; }
                [ "$(rank "$pl")" -gt "$r" ] && fail "$f: upward include of $inc (layer $pl above $layer)"
                ;;
            */*.h)
                il=${inc%%/*}
                ir=$(rank "$il")
                if [ -z "$ir" ]; then fail "$f: includes $inc from no layer"
                elif [ "$ir" -gt "$r" ]; then fail "$f: upward include of $inc (layer $il above $layer)"
                fi
                [ -f "src/$inc" ] || fail "$f: includes $inc, which does not exist"
                ;;
            *) fail "$f: include \"$inc\" without its layer folder (write \"$layer/$inc\")" ;;
            esac
        done
    done
done

# 2. public headers include only public headers of their own or lower layers
for f in include/tram/*.h; do
    name=$(basename "$f" .h)
    [ "$name" = tram ] && continue
    pl=$(public_layer "$name")
    [ -z "$pl" ] && { fail "$f: no layer in tools/check_layers.sh (PUBLIC)"; continue; }
    for inc in $(includes "$f"); do
        il=$(public_layer "$(basename "$inc" .h)")
        [ -n "$il" ] && [ "$(rank "$il")" -gt "$(rank "$pl")" ] &&
            fail "$f: upward include of $inc (layer $il above $pl)"
    done
done

# 3. the command uses only public headers (and its own cli.h)
for f in src/cli/*.c src/cli/*.h; do
    [ -f "$f" ] || continue
    for inc in $(includes "$f"); do
        case "$inc" in tram/*.h|cli.h) ;; *) fail "$f: the command includes internal header $inc" ;; esac
    done
done

# 4. no cycle between the modules of one layer
for d in src/*/; do
    layer=$(basename "$d")
    [ "$layer" = cli ] && continue
    edges=""
    for f in "$d"*.c "$d"*.h; do
        [ -f "$f" ] || continue
        from=$(basename "$f"); from=${from%.c}; from=${from%.h}; from=${from%_internal}
        for inc in $(includes "$f"); do
            case "$inc" in "$layer"/*_internal.h) ;; *) continue ;; esac
            to=$(basename "$inc" _internal.h)
            [ "$to" = "$from" ] && continue
            [ -f "$d$to.c" ] || continue # a leaf header
            edges="$edges $from $to"
        done
    done
    [ -z "$edges" ] && continue
    # shellcheck disable=SC2086
    if ! printf '%s %s\n' $edges | tsort >/dev/null 2>"${TMPDIR:-/tmp}/tram-layers.$$"; then
        fail "src/$layer/: modules include each other in a cycle: $(grep -v 'input contains a loop' "${TMPDIR:-/tmp}/tram-layers.$$" | sed 's/^tsort: //' | tr '\n' ' ')"
    fi
    rm -f "${TMPDIR:-/tmp}/tram-layers.$$"
done

if [ "$bad" -eq 0 ]; then
    echo "layers: 1 passed, 0 failed"
else
    echo "layers: 0 passed, 1 failed"
fi
exit "$bad"
