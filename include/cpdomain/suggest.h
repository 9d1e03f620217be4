/* suggest.h: "did you mean": the closest of a list of words to a mistyped one. Pure. */
#ifndef CPDOMAIN_SUGGEST_H
#define CPDOMAIN_SUGGEST_H

#include <stddef.h>

/* The optimal-string-alignment distance between a and b (insertions, deletions, substitutions
 * and swaps of two neighbouring characters, each costing 1; Damerau 1964, Commun ACM 7:171),
 * comparing letters without case when nocase is set. Words longer than 64 bytes are compared on
 * their first 64. NULL counts as "". */
size_t cpd_edit_distance(const char *a, const char *b, int nocase);

/* The candidate closest to word, or NULL when none is close enough: a case-insensitive match
 * first, else the smallest distance when it is at most 1 for words of up to 4 characters, 2 up
 * to 8 and 3 beyond (common practice for spelling suggestions), the first of equals. cands holds
 * n strings (NULL entries are skipped); the result points into it. */
const char *cpd_suggest(const char *word, const char *const *cands, size_t n);

#endif
