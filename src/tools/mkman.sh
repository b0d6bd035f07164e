#!/bin/sh
# mkman.sh ARRANK - write the manual page arrank(1) on standard output, made
# from the program's own --help texts (arrank --help and arrank CMD --help),
# so that the manual and --help are one text in two renderings and cannot
# drift.  Option lines ("  --opt ARG   words", continued by deeper-indented
# lines) become .TP items; other lines are paragraphs.
set -eu
A=$1
version=$("$A" --version | sed 's/^arrank //')
date=${SOURCE_DATE_EPOCH:+$(date -u -d "@$SOURCE_DATE_EPOCH" +%Y-%m-%d)}
commands=$("$A" --help | sed -n '/^commands:/,/^$/p' | awk 'NR > 1 && NF { print $1 }')

# roff-safe text: backslashes doubled, a leading dot or quote escaped, hyphens
# of options as \-.
roff() {
    sed -e 's/\\/\\e/g' -e "s/^\\([.']\\)/\\\\\\&\\1/" -e 's/-/\\-/g'
}

# help text (after its usage line) -> roff body; text escaped as roff() does
body() {
    awk '
    function esc(t) {
        gsub(/\\/, "\\e", t); gsub(/-/, "\\-", t)
        if (t ~ /^[.\047]/) t = "\\&" t
        return t
    }
    function flush() { if (para != "") { print para; para = "" } }
    /^  --?[A-Za-z]/ {
        flush()
        line = substr($0, 3)
        # the option and its argument end where two spaces begin the words
        i = index(line, "  ")
        if (i > 0) { opt = substr(line, 1, i - 1); rest = substr(line, i) }
        else { opt = line; rest = "" }
        sub(/^ +/, "", rest)
        print ".TP"
        print "\\fB" esc(opt) "\\fR"
        if (rest != "") print esc(rest)
        inopt = 1
        next
    }
    /^     +[^ ]/ && inopt { t = $0; sub(/^ +/, "", t); print esc(t); next }
    /^$/ { flush(); inopt = 0; print ".PP"; next }
    { inopt = 0; t = $0; sub(/^ +/, "", t); t = esc(t); para = (para == "" ? t : para "\n" t) }
    END { flush() }'
}

cat <<ROFF
.TH ARRANK 1 "${date:-}" "arrank $version" "User Commands"
.SH NAME
arrank \\- Arrhenius fits, diagnostics and rankings for catalyst screening campaigns
.SH SYNOPSIS
.B arrank
.I COMMAND CAMPAIGN
.RI [ options ]
.SH DESCRIPTION
ROFF
"$A" --help | sed -n '3,/^commands:/p' | sed '$d' | body
echo ".SH COMMANDS"
"$A" --help | sed -n '/^commands:/,/^$/p' | sed '1d;/^$/d' | roff | awk '{
    name = $1; $1 = ""; sub(/^ +/, ""); print ".TP"; print "\\fB" name "\\fR"; print }'
for c in $commands; do
    echo ".SS arrank $c"
    "$A" "$c" --help | sed -n '1p' | sed 's/^usage: //' | roff | sed 's/^/.B /'
    echo ".PP"
    "$A" "$c" --help | sed '1,2d' | body
done
cat <<ROFF
.SH EXIT STATUS
ROFF
"$A" --help | sed -n '/^Exit status/,$p' | roff
cat <<ROFF
.SH CAUTIONS
The activation energies and pre-exponential factors are apparent: valid for
the tested catalyst, feed and temperature window only.  Rates extrapolated
beyond the measured range may be wrong in kind.  Do not use them for reactor
design, scale-up or safety limits; thermal runaway, hot spots and toxic or
flammable gases need their own studies.  arrank supports, and does not
replace, the judgement of qualified people and local codes and regulations.
.SH SEE ALSO
The README of the arrank sources: the campaign format, the JSON keys and the
numbers behind every result.
ROFF
