# cpdomain: one plain Makefile. Settings first; every object listed by hand.
CC      ?= cc
BUILD   ?= build
PREFIX  ?= /usr/local
CFLAGS  ?= -O2 -g
# -Wno-format-truncation: snprintf into a bounded message buffer truncates on purpose
WARN     = -std=c17 -Wall -Wextra -Wpedantic -Wshadow -Wstrict-prototypes -Wmissing-prototypes \
           -Wwrite-strings -Werror -Wno-format-truncation
# clang (make CC=clang) has no -Wformat-truncation: drop the GCC-only flag so -Werror builds there too
ifneq ($(findstring clang,$(shell $(CC) --version 2>/dev/null | head -n 1)),)
WARN := $(filter-out -Wno-format-truncation,$(WARN))
# clang reports the simd loops it leaves scalar (the double max-reductions of mmp.c): a note, not an error
MMP_CLANG = -Wno-pass-failed
endif
PKGS     = gsl sqlite3 libcjson libzstd libpq
# '=' (not ':='): pkg-config runs after 'deps' has had the chance to install the packages
PKG_CFLAGS = $(shell pkg-config --cflags $(PKGS) 2>/dev/null)
PKG_LIBS   = $(shell pkg-config --libs $(PKGS) 2>/dev/null) -lcsv -lm
ifeq ($(SAN),1)
SANFLAGS = -fsanitize=address,undefined -fno-omit-frame-pointer -fno-sanitize-recover=undefined
endif
ALL_CFLAGS = $(WARN) $(CFLAGS) $(SANFLAGS) -D_POSIX_C_SOURCE=200809L -Iinclude -Isrc $(PKG_CFLAGS) -MMD -MP
ALL_LDFLAGS = $(SANFLAGS) $(LDFLAGS)

# The library: every module but the CLI.
LIB_SRCS = src/status.c src/units.c src/nlfit.c src/linfit.c src/gx.c src/csvin.c src/validate.c \
           src/import_trials.c src/import_athletes.c src/store.c src/store_athlete.c src/store_fit.c \
           src/store_gx.c src/import_gx.c
LIB_SRCS += src/protocol.c src/balance.c
LIB_SRCS += src/pd.c
LIB_SRCS += src/svgplot.c
LIB_SRCS += src/plots.c
LIB_SRCS += src/ramp.c
LIB_SRCS += src/ramp_ci.c src/resample.c
LIB_SRCS += src/lactate.c
LIB_SRCS += src/steps.c
LIB_SRCS += src/lactate_ci.c
LIB_SRCS += src/domains.c
LIB_SRCS += src/history.c
LIB_SRCS += src/kinetics.c
LIB_SRCS += src/session.c src/mmp.c src/allout.c
# The curve scan alone: vectorised, with an AVX2 clone beside the portable code (mmp.c, target_clones).
$(BUILD)/obj/mmp.o: ALL_CFLAGS += -O3 -fopenmp-simd $(MMP_CLANG)
LIB_SRCS += src/sheet.c
LIB_SRCS += src/energy.c
LIB_SRCS += src/safefile.c
LIB_SRCS += src/validate_records.c src/validate_dump.c
LIB_SRCS += src/suggest.c
LIB_SRCS += src/store_squad.c
# The CLI: main and one file per command family.
CLI_SRCS = src/main.c src/cli_out.c src/cmd_athlete.c src/cmd_trial.c src/cli_pd.c src/cmd_fit.c src/cmd_solve.c \
           src/cmd_ramp.c src/cmd_lactate.c src/cli_domains.c src/cmd_domains.c \
           src/cmd_history.c
LIB_SRCS += src/store_dump.c src/export.c
CLI_SRCS += src/cmd_export.c
CLI_SRCS += src/cli_retry.c
CLI_SRCS += src/cmd_bout.c
CLI_SRCS += src/cli_energy.c src/cmd_energy.c
CLI_SRCS += src/cli_domains_json.c src/cmd_sheet.c
LIB_SRCS += src/store_session.c src/import_session.c
LIB_SRCS += src/store_codec.c
LIB_SRCS += src/store_db.c src/store_pg.c src/store_open.c
LIB_SRCS += src/csvfast.c
CLI_SRCS += src/cmd_session.c
LIB_SRCS += src/athlete.c src/athlete_domains.c src/export_domains.c
CLI_SRCS += src/cli_athlete.c src/cli_gx.c src/cli_history.c
CLI_SRCS += src/cli_session.c src/cli_balance.c
CLI_SRCS += src/cli_squad.c src/cmd_squad.c src/cmd_server.c
# Unit tests: one cmocka program per module.
TESTS    = test_units test_nlfit test_linfit test_gx test_store test_csvin
TESTS += test_protocol test_balance
TESTS += test_pd
TESTS += test_svgplot
TESTS += test_domains
TESTS += test_history
TESTS += test_ramp
TESTS += test_lactate
TESTS += test_steps
TESTS += test_kinetics
TESTS += test_session test_mmp test_allout
TESTS += test_export test_store_dump
TESTS += test_sheet
TESTS += test_energy
TESTS += test_honest
TESTS += test_ramp_ci
TESTS += test_safefile
TESTS += test_csv_growth
TESTS += test_store_codec test_csvfast
TESTS += test_suggest
TESTS += test_athlete
TESTS += test_squad
# Benchmarks.
BENCHES  =
BENCHES += bench_pd
BENCHES += bench_mmp
BENCHES += bench_sessions
BENCHES += bench_energy

# Fuzzing (tests/fuzz/README.md): libFuzzer harnesses built with clang, ASan and UBSan.
FUZZERS  = trials gx lactate session protocol export restore
FUZZ_SECONDS ?= 60
FUZZ_DIR = build/fuzz
FUZZ_SAN = -fsanitize=address,undefined -fno-sanitize-recover=undefined -fno-omit-frame-pointer
FUZZ_BINS = $(FUZZERS:%=$(FUZZ_DIR)/fuzz_%)

MIGRATIONS = db/schema.sql $(sort $(wildcard db/[0-9][0-9][0-9]_*.sql))
# PostgreSQL's additions to the migration of the same number (row-level security, ...)
MIGRATIONS_PG = $(sort $(wildcard db/pg/[0-9][0-9][0-9]_*.sql))

LIB_OBJS = $(LIB_SRCS:src/%.c=$(BUILD)/obj/%.o) $(BUILD)/obj/migrations.o
CLI_OBJS = $(CLI_SRCS:src/%.c=$(BUILD)/obj/%.o)
LIB      = $(BUILD)/libcpdomain.a
BIN      = $(BUILD)/cpdomain
TEST_BINS  = $(TESTS:%=$(BUILD)/tests/%)
BENCH_BINS = $(BENCHES:%=$(BUILD)/bench/%)
STAMP    = $(BUILD)/.deps-ok

.PHONY: all test test-pg check valgrind bench demo deps install clean docs $(BUILD)/cpdomain.pc
.PHONY: fuzz fuzz-smoke fuzz-lib
all: $(BIN)

deps:
	@tools/deps.sh
$(STAMP):
	@mkdir -p $(BUILD)
	@tools/deps.sh && touch $@

$(BUILD)/obj/%.o: src/%.c | $(STAMP)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) -c $< -o $@

$(BUILD)/embed: tools/embed.c | $(STAMP)
	@mkdir -p $(BUILD)
	$(CC) -std=c17 -Wall -Wextra -O1 $< -o $@
$(BUILD)/migrations.c: $(BUILD)/embed $(MIGRATIONS) $(MIGRATIONS_PG)
	$(BUILD)/embed $@ $(MIGRATIONS) -- $(MIGRATIONS_PG)
$(BUILD)/obj/migrations.o: $(BUILD)/migrations.c
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) -c $< -o $@

$(LIB): $(LIB_OBJS)
	@rm -f $@
	ar rcs $@ $^
$(BIN): $(CLI_OBJS) $(LIB)
	$(CC) $(ALL_LDFLAGS) $(CLI_OBJS) $(LIB) $(PKG_LIBS) -o $@

$(BUILD)/tests/%: tests/%.c $(LIB) | $(STAMP)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(ALL_LDFLAGS) -Itests $< $(LIB) $(PKG_LIBS) -lcmocka -o $@

$(BUILD)/bench/%: tests/%.c $(LIB) | $(STAMP)
	@mkdir -p $(dir $@)
	$(CC) $(ALL_CFLAGS) $(ALL_LDFLAGS) -Itests $< $(LIB) $(PKG_LIBS) -o $@

# The example program of the library layer: public headers and libcpdomain.a only (no -Isrc).
EXAMPLES = $(BUILD)/example_domains
$(BUILD)/example_domains: tests/example_domains.c $(LIB) | $(STAMP)
	$(CC) $(WARN) $(CFLAGS) $(SANFLAGS) -D_POSIX_C_SOURCE=200809L -Iinclude $(PKG_CFLAGS) $(ALL_LDFLAGS) $< $(LIB) $(PKG_LIBS) -o $@

# make test: every unit test and every CLI test; the last line is "N passed, N failed".
test: $(BIN) $(TEST_BINS) $(EXAMPLES)
	@sh tests/run.sh $(BUILD)

# make test-pg: the same suite with every store a database on a real PostgreSQL server: a
# throw-away cluster (tools/pgcluster.sh) unless CPDOMAIN_TEST_PG already names a server's superuser
# URI; the cluster is stopped and removed whatever the outcome. Same summary line as make test.
test-pg: $(BIN) $(TEST_BINS) $(EXAMPLES)
	@sh tests/run_pg.sh $(BUILD)

# make check: the whole suite again under AddressSanitizer and UndefinedBehaviorSanitizer.
check:
	@$(MAKE) --no-print-directory BUILD=build/san SAN=1 test

# make valgrind: the unit tests and the CLI tests under valgrind's memcheck.
valgrind: $(BIN) $(TEST_BINS) $(EXAMPLES)
	@VALGRIND="valgrind -q --error-exitcode=99 --leak-check=full --errors-for-leak-kinds=definite" \
	  sh tests/run.sh $(BUILD)

bench: $(BIN) $(BENCH_BINS)
	@for b in $(BENCH_BINS); do echo "== $$b"; $$b || exit 1; done
	@echo "== tests/bench_engines.sh"; sh tests/bench_engines.sh $(BIN)

# make fuzz: every harness for FUZZ_SECONDS each (make fuzz FUZZ_SECONDS=600 FUZZERS=session);
# make fuzz-smoke: 10 s each, as CI runs it.
fuzz: $(FUZZ_BINS)
	@sh tests/fuzz/run.sh $(FUZZ_SECONDS) $(FUZZ_DIR) $(FUZZERS)
fuzz-smoke: $(FUZZ_BINS)
	@sh tests/fuzz/run.sh 10 $(FUZZ_DIR) $(FUZZERS)
fuzz-lib: | $(STAMP)
	@$(MAKE) --no-print-directory CC=clang BUILD=$(FUZZ_DIR) CFLAGS="-O1 -g -fsanitize=fuzzer-no-link" \
	  SANFLAGS="$(FUZZ_SAN)" $(FUZZ_DIR)/libcpdomain.a
$(FUZZ_DIR)/fuzz_%: tests/fuzz/fuzz_%.c tests/fuzz/fuzz.h fuzz-lib
	clang -std=c17 -Wall -Wextra -Werror -O1 -g -D_POSIX_C_SOURCE=200809L -Iinclude -Isrc -Itests/fuzz $(PKG_CFLAGS) \
	  -fsanitize=fuzzer $(FUZZ_SAN) $< $(FUZZ_DIR)/libcpdomain.a $(PKG_LIBS) -o $@

demo: $(BIN)
	@sh demo/run.sh $(BIN)

# The man page and the bash/zsh completions come from the command tables (the binary's --help
# texts) through tools/gen_docs.sh: one source, regenerated whenever the binary changes.
DOCS = $(BUILD)/doc/cpdomain.1 $(BUILD)/doc/cpdomain.bash $(BUILD)/doc/_cpdomain
VERSION = $(shell sed -n 's/^\#define CPDOMAIN_VERSION "\(.*\)"/\1/p' include/cpdomain/version.h)
docs: $(DOCS) $(BUILD)/cpdomain.pc
$(DOCS) &: $(BIN) tools/gen_docs.sh
	sh tools/gen_docs.sh $(BIN) $(BUILD)/doc
# libpq is named in Libs.private, not Requires.private: Debian ships no static libpq, and its .pc
# file's private libraries (-lpgcommon -lpgport ...) would break 'pkg-config --static'.
$(BUILD)/cpdomain.pc: Makefile include/cpdomain/version.h
	@mkdir -p $(BUILD)
	printf '%s\n' 'prefix=$(PREFIX)' 'libdir=$${prefix}/lib' 'includedir=$${prefix}/include' '' \
	  'Name: cpdomain' 'Description: critical power, W'"'"' and the intensity domains' 'Version: $(VERSION)' \
	  'Requires.private: $(filter-out libpq,$(PKGS))' 'Libs: -L$${libdir} -lcpdomain' 'Libs.private: -lpq -lcsv -lm' \
	  'Cflags: -I$${includedir}' >$@

install: $(BIN) $(LIB) docs
	install -d $(DESTDIR)$(PREFIX)/bin
	install -m 755 $(BIN) $(DESTDIR)$(PREFIX)/bin/cpdomain
	install -d $(DESTDIR)$(PREFIX)/lib/pkgconfig $(DESTDIR)$(PREFIX)/include/cpdomain \
	  $(DESTDIR)$(PREFIX)/share/man/man1 $(DESTDIR)$(PREFIX)/share/bash-completion/completions \
	  $(DESTDIR)$(PREFIX)/share/zsh/site-functions
	install -m 644 $(LIB) $(DESTDIR)$(PREFIX)/lib/libcpdomain.a
	install -m 644 include/cpdomain/*.h $(DESTDIR)$(PREFIX)/include/cpdomain/
	install -m 644 $(BUILD)/cpdomain.pc $(DESTDIR)$(PREFIX)/lib/pkgconfig/cpdomain.pc
	install -m 644 $(BUILD)/doc/cpdomain.1 $(DESTDIR)$(PREFIX)/share/man/man1/cpdomain.1
	install -m 644 $(BUILD)/doc/cpdomain.bash $(DESTDIR)$(PREFIX)/share/bash-completion/completions/cpdomain
	install -m 644 $(BUILD)/doc/_cpdomain $(DESTDIR)$(PREFIX)/share/zsh/site-functions/_cpdomain

clean:
	rm -rf build

-include $(shell find $(BUILD) -name '*.d' 2>/dev/null)
