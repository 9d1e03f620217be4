/* store_int.h: internals shared by the store's source files (not API). */
#ifndef CPDOMAIN_STORE_INT_H
#define CPDOMAIN_STORE_INT_H

/* The schema and migrations, embedded at build time by tools/embed.c from db/:
 * entry k brings a store from version k to version k + 1. */
extern const char *const cpd_store_migrations[];
extern const char *const cpd_store_migration_files[];
extern const int cpd_store_migration_count;

#endif
