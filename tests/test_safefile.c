/* test_safefile.c: output files written through a temporary file and rename: symbolic links are
 * refused, an existing file survives a failed write, no temporary file is left behind. */
#include "cpdomain/safefile.h"
#include "cpdomain/status.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <dirent.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <unistd.h>

static char dir[64];

static int setup(void **state)
{
    (void)state;
    snprintf(dir, sizeof dir, "/tmp/cpd_safefile.XXXXXX");
    return mkdtemp(dir) ? 0 : -1;
}

static int teardown(void **state)
{
    (void)state;
    char cmd[128];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
    return system(cmd) == 0 ? 0 : -1;
}

static char *slurp(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return NULL;
    static char buf[1 << 16];
    size_t n = fread(buf, 1, sizeof buf - 1, f);
    buf[n] = '\0';
    fclose(f);
    return buf;
}

/* Entries in dir other than "." and ".." (a leftover temporary file would be counted). */
static int entries(void)
{
    DIR *d = opendir(dir);
    int n = 0;
    for (struct dirent *e; d && (e = readdir(d));)
        n += strcmp(e->d_name, ".") != 0 && strcmp(e->d_name, "..") != 0;
    if (d)
        closedir(d);
    return n;
}

static void writes_and_replaces_keeping_the_mode(void **state)
{
    (void)state;
    char path[128], msg[CPD_MSG_MAX];
    snprintf(path, sizeof path, "%s/out.txt", dir);
    assert_int_equal(cpd_safe_write(path, "first\n", 6, msg), CPD_OK);
    assert_string_equal(slurp(path), "first\n");
    assert_int_equal(chmod(path, 0640), 0);
    assert_int_equal(cpd_safe_write(path, "second\n", 7, msg), CPD_OK);
    assert_string_equal(slurp(path), "second\n");
    struct stat st;
    assert_int_equal(stat(path, &st), 0);
    assert_int_equal(st.st_mode & 07777, 0640);
    assert_int_equal(entries(), 1);
}

static void refuses_a_symbolic_link(void **state)
{
    (void)state;
    char victim[128], link[128], msg[CPD_MSG_MAX];
    snprintf(victim, sizeof victim, "%s/victim", dir);
    snprintf(link, sizeof link, "%s/sheet.html", dir);
    FILE *f = fopen(victim, "w");
    assert_non_null(f);
    fputs("precious\n", f);
    fclose(f);
    assert_int_equal(symlink(victim, link), 0);
    assert_int_equal(cpd_safe_write(link, "evil", 4, msg), CPD_ECREATE);
    assert_non_null(strstr(msg, "is a symbolic link: refusing to write through it"));
    assert_string_equal(slurp(victim), "precious\n");
    /* a dangling link too: it would otherwise create the file it points to */
    char dangling[128], target[128];
    snprintf(target, sizeof target, "%s/created", dir);
    snprintf(dangling, sizeof dangling, "%s/dangling", dir);
    assert_int_equal(symlink(target, dangling), 0);
    assert_int_equal(cpd_safe_write(dangling, "x", 1, msg), CPD_ECREATE);
    assert_int_equal(access(target, F_OK), -1);
    assert_int_equal(entries(), 3);
}

static void a_failed_write_leaves_the_old_file(void **state)
{
    (void)state;
    char path[128], msg[CPD_MSG_MAX];
    snprintf(path, sizeof path, "%s/export.json", dir);
    assert_int_equal(cpd_safe_write(path, "{\"old\": true}\n", 14, msg), CPD_OK);
    /* a file-size limit of 4 kB makes the write of 64 kB fail (EFBIG once SIGXFSZ is ignored) */
    static char big[65536];
    memset(big, 'x', sizeof big);
    struct rlimit old, lim = {4096, 4096};
    assert_int_equal(getrlimit(RLIMIT_FSIZE, &old), 0);
    lim.rlim_max = old.rlim_max;
    void (*prev)(int) = signal(SIGXFSZ, SIG_IGN);
    assert_int_equal(setrlimit(RLIMIT_FSIZE, &lim), 0);
    int rc = cpd_safe_write(path, big, sizeof big, msg);
    setrlimit(RLIMIT_FSIZE, &old);
    signal(SIGXFSZ, prev);
    assert_int_equal(rc, CPD_ECREATE);
    assert_non_null(strstr(msg, "the existing file is unchanged"));
    assert_string_equal(slurp(path), "{\"old\": true}\n");
    assert_int_equal(entries(), 1); /* the temporary file was removed */
}

static void devices_are_written_in_place_and_directories_refused(void **state)
{
    (void)state;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_safe_write("/dev/null", "x", 1, msg), CPD_OK);
    assert_int_equal(cpd_safe_write(dir, "x", 1, msg), CPD_ECREATE);
    assert_non_null(strstr(msg, "not a regular file"));
    char missing[160];
    snprintf(missing, sizeof missing, "%s/no/such/folder/x.csv", dir);
    assert_int_equal(cpd_safe_write(missing, "x", 1, msg), CPD_ECREATE);
    assert_non_null(strstr(msg, "No such file or directory"));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(writes_and_replaces_keeping_the_mode, setup, teardown),
        cmocka_unit_test_setup_teardown(refuses_a_symbolic_link, setup, teardown),
        cmocka_unit_test_setup_teardown(a_failed_write_leaves_the_old_file, setup, teardown),
        cmocka_unit_test_setup_teardown(devices_are_written_in_place_and_directories_refused, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
