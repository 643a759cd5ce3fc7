# declared_api.sh — sourced by the tests of the library's interface (symbols.sh, api_doc.sh).
# declared_api HEADER OUT: writes the lt_ functions HEADER declares to OUT, one a line, sorted
# (the header read with its comments and preprocessor lines removed); fails, with a message,
# when fewer than 20 are found (the header was not read).
declared_api() {
    perl -0777 -ne 's{/\*.*?\*/}{}gs; s{^[ \t]*#.*$}{}gm; print "$1\n" while /\b(lt_\w+)\s*\(/g' \
        "$1" | sort -u >"$2"
    n=$(wc -l <"$2")
    if [ "$n" -lt 20 ]; then
        echo "FAIL: only $n functions found in $1: the header was not read"
        return 1
    fi
}
