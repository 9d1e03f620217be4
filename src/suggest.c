/* suggest.c: edit distance and the closest word, for "did you mean" messages. */
#include "cpdomain/suggest.h"

#include <ctype.h>
#include <string.h>

#define MAXW 64

static int same(char x, char y, int nocase)
{
    return nocase ? tolower((unsigned char)x) == tolower((unsigned char)y) : x == y;
}

size_t cpd_edit_distance(const char *a, const char *b, int nocase)
{
    a = a ? a : "";
    b = b ? b : "";
    size_t n = strlen(a), m = strlen(b);
    n = n > MAXW ? MAXW : n;
    m = m > MAXW ? MAXW : m;
    size_t d[MAXW + 1][MAXW + 1];
    for (size_t i = 0; i <= n; i++)
        d[i][0] = i;
    for (size_t j = 0; j <= m; j++)
        d[0][j] = j;
    for (size_t i = 1; i <= n; i++)
        for (size_t j = 1; j <= m; j++) {
            size_t cost = same(a[i - 1], b[j - 1], nocase) ? 0 : 1;
            size_t v = d[i - 1][j] + 1;
            if (d[i][j - 1] + 1 < v)
                v = d[i][j - 1] + 1;
            if (d[i - 1][j - 1] + cost < v)
                v = d[i - 1][j - 1] + cost;
            if (i > 1 && j > 1 && same(a[i - 1], b[j - 2], nocase) && same(a[i - 2], b[j - 1], nocase) &&
                d[i - 2][j - 2] + 1 < v)
                v = d[i - 2][j - 2] + 1;
            d[i][j] = v;
        }
    return d[n][m];
}

const char *cpd_suggest(const char *word, const char *const *cands, size_t n)
{
    if (!word || !*word || !cands)
        return NULL;
    for (size_t i = 0; i < n; i++)
        if (cands[i] && cpd_edit_distance(word, cands[i], 1) == 0)
            return cands[i];
    size_t L = strlen(word), limit = L <= 4 ? 1 : L <= 8 ? 2 : 3;
    const char *best = NULL;
    size_t bd = limit + 1;
    for (size_t i = 0; i < n; i++) {
        if (!cands[i])
            continue;
        size_t dd = cpd_edit_distance(word, cands[i], 1);
        if (dd < bd) {
            bd = dd;
            best = cands[i];
        }
    }
    return best;
}
