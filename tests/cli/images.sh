# tests/cli/images.sh - tram board and tram detect (sourced by run.sh).
#
# Outside checks of the printed scale: the page size that poppler's
# pdfinfo reads from the PDF against ISO 216 (A4 = 210 x 297 mm) and the US
# letter size (8.5 x 11 in), converted with 1 in = 25.4 mm = 72 pt; and the
# square size in a rendering of the PDF by poppler's pdftoppm (not cairo),
# measured by tram detect.
im="$tmp/images"
mkdir -p "$im"
# close A B TOL: |A - B| <= TOL
close() { awk -v a="$1" -v b="$2" -v t="$3" 'BEGIN { d = a - b; if (d < 0) d = -d; exit !(d <= t) }'; }
# pagesize PDF: "W H" in pt as pdfinfo reports it
pagesize() { pdfinfo "$1" | sed -n 's/^Page size: *\([0-9.]*\) x \([0-9.]*\) pts.*/\1 \2/p'; }
png_sig() { [ "$(head -c 8 "$1" | od -An -tx1 | tr -d ' \n')" = "89504e470d0a1a0a" ]; }

if ! command -v pdfinfo >/dev/null 2>&1; then
    if [ "${CI:-}" = true ]; then bad "pdfinfo (poppler-utils) missing"; else echo "skipped: pdfinfo not installed (poppler-utils)"; fi
else
# --- tram board -------------------------------------------------------
"$TRAM" board --corners 9x6 --square 18mm -o "$im/b.json" --pdf "$im/b.pdf" --png "$im/b.png" --dpi 100 \
    >"$tmp/out" 2>"$tmp/err" && [ ! -s "$tmp/out" ] && [ -s "$im/b.json" ] && [ -s "$im/b.pdf" ] && [ -s "$im/b.png" ] \
    && ok || { bad "board with PDF and PNG"; cat "$tmp/err"; }
grep -q '"format":[[:space:]]*"tram-board"' "$im/b.json" && grep -q '"convention"' "$im/b.json" && ok || bad "board file"
# A4 (ISO 216: 210 x 297 mm) = 595.276 x 841.890 pt; this board is laid out landscape
set -- $(pagesize "$im/b.pdf")
close "$1" 841.890 0.01 && close "$2" 595.276 0.01 && ok || bad "A4 landscape page size: $1 x $2 pt"
"$TRAM" board --corners 5x4 --square 20mm -o "$im/p.json" --pdf "$im/p.pdf" 2>/dev/null
set -- $(pagesize "$im/p.pdf")
close "$1" 595.276 0.01 && close "$2" 841.890 0.01 && ok || bad "A4 portrait page size: $1 x $2 pt"
# US letter, 8.5 x 11 in = 612 x 792 pt; and a page given in mm
"$TRAM" board --corners 5x4 --square 20mm -o "$im/l.json" --pdf "$im/l.pdf" --page letter 2>/dev/null
set -- $(pagesize "$im/l.pdf")
close "$1" 612 0.01 && close "$2" 792 0.01 && ok || bad "letter page size: $1 x $2 pt"
"$TRAM" board --corners 9x6 --square 25mm -o "$im/a3.json" --pdf "$im/a3.pdf" --page 420x297 2>/dev/null
set -- $(pagesize "$im/a3.pdf")
close "$1" 1190.551 0.01 && close "$2" 841.890 0.01 && ok || bad "420x297 mm page size: $1 x $2 pt"
pdftotext "$im/b.pdf" "$im/b.txt" && grep -q '9 x 6 inner corners' "$im/b.txt" && grep -q 'square 18 mm' "$im/b.txt" \
    && grep -q 'Print at 100% / actual size, no fit to page' "$im/b.txt" && grep -q 'must measure 100 mm' "$im/b.txt" \
    && ok || { bad "board parameters in the PDF text"; cat "$im/b.txt"; }
# does not fit: refused with the sizes, nothing written
expect_error "board does not fit" 2 "error: a 9x6 board of 25 mm squares does not fit on a4: it needs 312.0 x 261.0 mm.*the page is 210.0 x 297.0 mm" \
    board --corners 9x6 --square 25mm -o "$im/big.json" --pdf "$im/big.pdf"
[ ! -e "$im/big.json" ] && [ ! -e "$im/big.pdf" ] && ok || bad "a board that does not fit left a file"
expect_error "board symmetric" 2 "a 9x7 board is symmetric: cols and rows are both odd, so a 180-degree turn maps the board onto itself" \
    board --corners 9x7 --square 10mm -o "$im/sym.json"
expect_error "board existing file" 2 "b.json: error: already exists" board --corners 9x6 --square 18mm -o "$im/b.json"
expect_error "board square unit" 2 "--square '18': expected a positive length with its unit" board --corners 9x6 --square 18 -o "$im/u.json"
expect_error "board page" 2 "page 'a5': expected a4, letter or WxH" board --corners 9x6 --square 18mm -o "$im/pg.json" --pdf "$im/pg.pdf" --page a5
[ ! -e "$im/u.json" ] && [ ! -e "$im/pg.json" ] && ok || bad "a refused board left a file"
"$TRAM" board --corners 9x6 --square 18mm -o "$im/b.json" --force 2>/dev/null && ok || bad "board --force"
ls "$im" | grep -q '\.tmp\.' && bad "temporary files left" || ok

# --- tram detect ------------------------------------------------------
# poppler renders the PDF at 100 dpi; the squares must measure
# 18 mm = 18 / 25.4 * 100 = 70.866 px, so corners 0 and 8 are 566.93 px apart
if command -v pdftoppm >/dev/null 2>&1; then
    pdftoppm -r 100 -gray -png "$im/b.pdf" "$im/r" && mv "$im/r-1.png" "$im/v1.png"
    pdftoppm -r 100 -jpeg "$im/b.pdf" "$im/r" && mv "$im/r-1.jpg" "$im/v2.jpg"
    cp "$im/v1.png" "$im/v3.png"
    "$TRAM" detect --board "$im/b.json" "$im/v1.png" "$im/v2.jpg" "$im/v3.png" >"$im/obs.csv" 2>"$tmp/err" \
        && ok || { bad "detect: exit $?"; cat "$tmp/err"; }
    grep -q '^# pixel-origin: top-left-pixel-centre$' "$im/obs.csv" && grep -q '^# image-size: 1170x827$' "$im/obs.csv" \
        && [ "$(grep -c '^v[123],' "$im/obs.csv")" -eq 162 ] && ok || bad "observation file"
    grep -q 'v2.jpg: station v2: found, 54 corners, edge blur' "$tmp/err" \
        && grep -q 'board found in 3 of 3 images (1170x827 pixels); pixel convention' "$tmp/err" && ok || { bad "detect report"; cat "$tmp/err"; }
    d=$(awk -F, '$1 == "v1" && $2 == 0 { u0 = $3; v0 = $4 } $1 == "v1" && $2 == 8 { u8 = $3; v8 = $4 }
                 END { printf "%.3f", sqrt((u8 - u0) ^ 2 + (v8 - v0) ^ 2) }' "$im/obs.csv")
    echo "images: 8 squares of the poppler rendering at 100 dpi: $d px (expected 566.929 from 18 mm)"
    close "$d" 566.929 0.5 && ok || bad "printed scale: 8 squares measure $d px, expected 566.929"
    if "$TRAM" detect --board "$im/b.json" --json -o "$im/obs2.csv" "$im/v1.png" "$im/v2.jpg" "$im/v3.png" >"$tmp/out" 2>"$tmp/err" &&
       grep -q '"boards_found":[[:space:]]*3' "$tmp/out" && grep -q '"pixel_origin":[[:space:]]*"top-left-pixel-centre"' "$tmp/out" &&
       [ "$(cat "$tmp/err")" = "observations: $im/obs2.csv" ] && cmp -s "$im/obs.csv" "$im/obs2.csv"; then ok; else bad "detect --json"; cat "$tmp/err"; fi
    # pictures, the directory given with a trailing slash
    "$TRAM" detect --board "$im/b.json" --plot "$im/pics/" -o "$im/obs3.csv" "$im/v1.png" "$im/v2.jpg" "$im/v3.png" 2>"$tmp/err" \
        && png_sig "$im/pics/v1-corners.png" && png_sig "$im/pics/coverage.png" && ! grep -q '//' "$tmp/err" && ok || { bad "detect --plot"; cat "$tmp/err"; }
    expect_error "detect existing picture" 2 "pics/v1-corners.png: error: already exists" \
        detect --board "$im/b.json" --plot "$im/pics" "$im/v1.png" "$im/v2.jpg" "$im/v3.png"
    # stations from a file
    printf 'image,station\nv1.png,s01\n%s,s02\nv3.png,s03\n' "$im/v2.jpg" >"$im/st.csv"
    "$TRAM" detect --board "$im/b.json" --stations "$im/st.csv" "$im/v1.png" "$im/v2.jpg" "$im/v3.png" 2>/dev/null >"$tmp/out" \
        && grep -q '^s02,53,' "$tmp/out" && ok || bad "detect --stations"
    printf 'image,station\nv1.png,s01\nv1.png,s09\n' >"$im/st2.csv"
    expect_error "detect stations twice" 2 "st2.csv:3: error: image 'v1.png' named again \\(first at line 2\\)" \
        detect --board "$im/b.json" --stations "$im/st2.csv" "$im/v1.png"
    # fewer than three boards: exit 3, no observation file
    "$TRAM" board --corners 9x4 --square 18mm -o "$im/o.json" --png "$im/other.png" --dpi 100 2>/dev/null
    expect_error "detect too few boards" 3 "the whole board was found in 2 images; at least 3 are needed" \
        detect --board "$im/b.json" -o "$im/few.csv" "$im/v1.png" "$im/other.png" "$im/v3.png"
    grep -q 'other.png: station other: not found (' "$tmp/err" && [ ! -e "$im/few.csv" ] && ok || { bad "detect exit 3 report"; cat "$tmp/err"; }
    # unreadable images: exit 2 naming the file, nothing written
    head -c 5000 "$im/v1.png" >"$im/cut.png"
    expect_error "detect truncated PNG" 2 "cut.png: error: truncated PNG file" \
        detect --board "$im/b.json" -o "$im/bad.csv" "$im/v1.png" "$im/cut.png" "$im/v3.png"
    head -c 3000 "$im/v2.jpg" >"$im/cut.jpg"
    expect_error "detect truncated JPEG" 2 "cut.jpg: error: corrupt or truncated JPEG file" \
        detect --board "$im/b.json" -o "$im/bad.csv" "$im/v1.png" "$im/cut.jpg" "$im/v3.png"
    printf 'station,point,u,v\n' >"$im/text.png"
    expect_error "detect non-image" 2 "text.png: error: not a PNG or JPEG image" \
        detect --board "$im/b.json" -o "$im/bad.csv" "$im/v1.png" "$im/text.png"
    pdftoppm -r 50 -png "$im/b.pdf" "$im/q" && mv "$im/q-1.png" "$im/small.png"
    expect_error "detect sizes differ" 2 "small.png: error: image size 585x414 differs from .*v1.png \\(1170x827\\)" \
        detect --board "$im/b.json" -o "$im/bad.csv" "$im/v1.png" "$im/small.png"
    expect_error "detect missing image" 2 "nosuch.png: error: cannot open" detect --board "$im/b.json" "$im/nosuch.png"
    [ ! -e "$im/bad.csv" ] && ok || bad "a refused detect run left an observation file"
    expect_error "detect bad board" 2 "sym.json:.*symmetric" \
        detect --board "$(printf '{"format": "tram-board", "version": 1, "kind": "chessboard",\n "cols": 8, "rows": 6, "square": 25, "length_unit": "mm"}\n' | mk sym.json)" "$im/v1.png"
    expect_error "detect no board" 2 "--board BOARD.json is required" detect "$im/v1.png"
else
    if [ "${CI:-}" = true ]; then bad "pdftoppm (poppler-utils) missing"; else echo "skipped: pdftoppm not installed (poppler-utils)"; fi
fi
fi

# Every command example of docs/images.md (its sh blocks) runs, in order,
# in an empty directory.
docs_dir="$tmp/docs-images"
mkdir -p "$docs_dir/bin"
printf '#!/bin/sh\nexec "%s" "$@"\n' "$TRAM" >"$docs_dir/bin/tram"
chmod +x "$docs_dir/bin/tram"
awk '/^```sh$/ { on = 1; next } /^```/ { on = 0 } on' "$here/../../docs/images.md" >"$docs_dir/examples.sh"
if [ -s "$docs_dir/examples.sh" ] && (cd "$docs_dir" && PATH="$docs_dir/bin:$PATH" sh -e examples.sh >/dev/null 2>"$docs_dir/err"); then
    ok
else
    bad "docs/images.md examples"; cat "$docs_dir/err"
fi
