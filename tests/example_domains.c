/* example_domains.c: a program that links only libcpdomain.a and its public headers and prints an
 * athlete's intensity domains from a store as 'cpdomain --json domains CODE' does (tests/cli/
 * cli_library.sh compares them byte for byte). Usage: example_domains STORE.db CODE
 * The date for staleness is today, or $CPDOMAIN_TODAY (YYYY-MM-DD) as for the command line. */
#include "cpdomain/athlete.h"
#include "cpdomain/store.h"
#include "cpdomain/units.h"

#include <stdio.h>
#include <stdlib.h>
#include <time.h>

int main(int argc, char **argv)
{
    if (argc != 3) {
        fprintf(stderr, "usage: example_domains STORE.db CODE\n");
        return 64;
    }
    int today = 0;
    const char *env = getenv("CPDOMAIN_TODAY");
    if (!env || cpd_parse_date(env, &today) != CPD_OK) {
        time_t now = time(NULL);
        struct tm tm;
        char buf[11];
        localtime_r(&now, &tm);
        strftime(buf, sizeof buf, "%Y-%m-%d", &tm);
        cpd_parse_date(buf, &today);
    }
    char msg[CPD_MSG_MAX] = "";
    cpd_store *s = NULL;
    int rc = cpd_store_open(argv[1], 0, &s, msg);
    if (rc) {
        fprintf(stderr, "example_domains: %s\n", msg);
        return 1;
    }
    cpd_athlete_query q = {.today = today};
    cpd_athlete_domains d;
    rc = cpd_athlete_domains_build(s, argv[2], &q, &d, msg);
    for (size_t i = 0; i < d.notes.n; i++) /* the library prints nothing: its notes are ours to show */
        fprintf(stderr, "%s\n", d.notes.text[i]);
    char *json = NULL;
    if (rc == CPD_OK && (rc = cpd_athlete_domains_json(&d, &json)) == CPD_OK)
        printf("%s\n", json);
    else
        fprintf(stderr, "example_domains: %s\n", msg[0] ? msg : cpd_strerror(rc));
    free(json);
    cpd_athlete_domains_free(&d);
    cpd_store_close(s);
    return rc == CPD_OK ? 0 : 1;
}
