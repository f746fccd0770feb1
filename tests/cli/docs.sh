# tests/cli/docs.sh - every example in README.md, docs/*.md and `tram help`
# runs, so that no example can rot (docs/testing.md, "Examples in the
# docs").  Sourced by run.sh (uses $TRAM, $tmp, ok, bad, have_dataset).
#
# Every fenced block of a page carries an info string:
#   sh      commands: each line (joined over trailing '\') runs with sh in a
#           scratch folder of the page that links the repository's datasets/,
#           tests/, tools/, python/, docs/ and include/ (and build/libtram.so),
#           with the tested tram first on PATH; each must exit 0
#   text    output, synopses, formulas, sketches: not run
#   csv, json   a file: preceded by '<!-- file: NAME -->', it is written as
#           NAME into the scratch folder before the page's next sh block
#   python  only in docs/python.md, whose examples tests/python runs
#   c       preceded by '<!-- file: examples/NAME.c -->': equal to that file
#           in docs/, which make install-check builds through tram.pc and runs
# The line right before a fence may hold one marker:
#   <!-- file: NAME -->         (csv, json) the block is the file NAME
#   <!-- needs: PATH -->        (sh) run only when the dataset PATH exists
#                               (have_dataset: skipped, or failed under CI)
#   <!-- exit: N -->            (sh) every line of the block exits N
#   <!-- not run: REASON -->    (sh) not run; REASON says what runs it instead
# The examples of `tram help`, `tram help SUBCOMMAND` and `tram help TOPIC`
# are the lines indented by two blanks under a line "examples..." up to the
# next blank line ("  # ..." lines are comments); they run the same way,
# in order, in one scratch folder per help text.

repo=$(cd "$here/../.." && pwd)
docdir=$tmp/doc
mkdir -p "$docdir/bin"
ln -sf "$TRAM" "$docdir/bin/tram"
[ -d "$repo/../shared" ] && ln -sfn "$repo/../shared" "$docdir/shared"

# doc_scratch NAME: a fresh scratch folder for one page; prints its path.
doc_scratch() {
    d=$docdir/$1
    rm -rf "$d"
    mkdir -p "$d/build"
    for x in datasets tests tools python docs include; do ln -s "$repo/$x" "$d/$x"; done
    lib=$(dirname "$TRAM")/libtram.so
    [ -f "$lib" ] && ln -s "$lib" "$d/build/libtram.so" && ln -s "$lib" "$d/build/libtram.so.0"
    echo "$d"
}

# doc_run WHERE DIR WANT CMD: run one example command in DIR, expect exit WANT.
doc_run() {
    (cd "$2" && PATH="$docdir/bin:$PATH" sh -c "$4") >"$docdir/out" 2>"$docdir/err" </dev/null
    rc=$?
    if [ "$rc" -eq "$3" ]; then ok
    else bad "docs example $1: exit $rc, expected $3: $4"; tail -5 "$docdir/err"; fi
}

# doc_blocks PAGE: split PAGE into $docdir/blocks/N.body with N.meta
# "LINE INFO MARKER..." per block (marker: the HTML comment before the fence).
doc_blocks() {
    rm -rf "$docdir/blocks"
    mkdir -p "$docdir/blocks"
    awk -v out="$docdir/blocks" '
        /^```/ && !inb { inb = 1; n++; info = substr($0, 4); sub(/[ \t].*/, "", info)
                          m = prev; if (m !~ /^<!-- .* -->$/) m = "-"
                          printf "%d %s %s\n", NR, (info == "" ? "-" : info), m > (out "/" n ".meta")
                          close(out "/" n ".meta"); printf "" > (out "/" n ".body"); next }
        /^```/ && inb  { inb = 0; close(out "/" n ".body"); next }
        inb            { print > (out "/" n ".body"); next }
                       { prev = $0 }' "$1"
}

# doc_commands FILE: the command lines of FILE, continuations joined, one a line.
doc_commands() {
    awk '{ if (sub(/\\$/, "")) { acc = acc $0; next } print acc $0; acc = "" }' "$1" |
        grep -v '^[[:space:]]*\(#.*\)\?$'
}

# san_skip WHERE BODY: true (and counted as skipped) in the sanitizer build
# (TRAM_TEST_SANITIZER=1) when the block links or loads build/libtram.so
# itself: that library needs the sanitizer runtime, which a plain cc or
# python3 does not bring; the plain build runs the block.
san_skip() {
    [ "${TRAM_TEST_SANITIZER:-}" = 1 ] && grep -q 'libtram\.so' "$2" || return 1
    skipped=$((skipped + 1))
    echo "skipped: docs example $1 in the sanitizer build (it links build/libtram.so; run in the plain build)"
    return 0
}

doc_page() {
    page=$1
    rel=${page#"$repo/"}
    d=$(doc_scratch "$(echo "$rel" | tr '/.' '__')")
    doc_blocks "$page"
    n=1
    while [ -f "$docdir/blocks/$n.meta" ]; do
        read -r line info marker <"$docdir/blocks/$n.meta"
        body=$docdir/blocks/$n.body
        where="$rel:$line"
        key=$(echo "$marker" | sed -n 's/^<!-- \([a-z ]*\):.*/\1/p')
        val=$(echo "$marker" | sed -n 's/^<!-- [a-z ]*: *\(.*[^ ]\) *-->$/\1/p')
        case "$info" in
        sh)
            case "$key" in
            "not run") ok ;;
            needs)
                if have_dataset "$repo/$val"; then
                    doc_commands "$body" >"$docdir/cmds"
                    while IFS= read -r c; do doc_run "$where" "$d" 0 "$c"; done <"$docdir/cmds"
                fi ;;
            exit | "")
                san_skip "$where" "$body" && { n=$((n + 1)); continue; }
                want=0; [ "$key" = exit ] && want=$val
                doc_commands "$body" >"$docdir/cmds"
                [ -s "$docdir/cmds" ] || bad "docs example $where: sh block without a command"
                while IFS= read -r c; do doc_run "$where" "$d" "$want" "$c"; done <"$docdir/cmds" ;;
            *) bad "docs example $where: marker '$marker' does not apply to an sh block" ;;
            esac ;;
        csv | json)
            if [ "$key" = file ] && [ -n "$val" ]; then cp "$body" "$d/$val"; ok
            else bad "docs example $where: a $info block needs '<!-- file: NAME -->' before it (or info string text)"; fi ;;
        c)
            # a C example is a file kept in docs/ that make install-check compiles and runs
            if [ "$key" = file ] && cmp -s "$body" "$repo/docs/$val"; then ok
            else bad "docs example $where: a c block must be preceded by '<!-- file: examples/NAME.c -->' and equal docs/examples/NAME.c"; fi ;;
        text) ok ;;
        python)
            [ "$rel" = docs/python.md ] && ok ||
                bad "docs example $where: python examples belong in docs/python.md (run by tests/python)" ;;
        *) bad "docs example $where: fenced block with info string '$info': expected sh, text, csv, json or python" ;;
        esac
        n=$((n + 1))
    done
}

for page in "$repo/README.md" "$repo"/docs/*.md; do doc_page "$page"; done

# The examples of `tram help` and of every subcommand's and topic's help.
"$TRAM" help >"$docdir/help" 2>&1 && ok || bad "tram help failed"
subs=$(sed -n '/^subcommands:/,/^$/s/^  \([a-z]*\) .*/\1/p;/^help topics/,/^$/s/^  \([a-z]*\) .*/\1/p' "$docdir/help")
[ -n "$subs" ] && ok || bad "tram help lists no subcommands"
nhelp=0
for sub in "" $subs; do
    "$TRAM" help $sub >"$docdir/help" 2>&1 || { bad "tram help $sub failed"; continue; }
    d=$(doc_scratch "help_$sub")
    sed -n '/^examples/,/^$/p' "$docdir/help" | sed -n 's/^  \([^#].*\)/\1/p' >"$docdir/cmds"
    [ -s "$docdir/cmds" ] && ok || bad "tram help $sub has no examples section"
    while IFS= read -r c; do doc_run "tram help $sub" "$d" 0 "$c"; nhelp=$((nhelp + 1)); done <"$docdir/cmds"
done
[ "$nhelp" -ge 15 ] && ok || bad "only $nhelp examples in tram help (expected one or more per subcommand)"
