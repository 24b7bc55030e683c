/* A stand-in for an SQLite host older than ambit supports.
 *
 * It loads libambit.so with dlopen and calls its entry point the way
 * SQLite's loader does, but hands it a routine table whose
 * libversion_number reports the version given on the command line. Only
 * malloc and libversion_number are filled in: the entry point must refuse
 * the host before it touches anything else. Prints the return code and
 * the error message. */
#include <dlfcn.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sqlite3ext.h>

static int fake_version = 0;
static int fake_libversion_number(void) { return fake_version; }
static void *fake_malloc(int n) { return malloc((size_t)n); }

typedef int (*entry_point)(sqlite3 *, char **, const sqlite3_api_routines *);

int main(int argc, char **argv) {
    if (argc != 3) {
        fprintf(stderr, "usage: old_host LIBRARY VERSION_NUMBER\n");
        return 2;
    }
    fake_version = atoi(argv[2]);
    void *lib = dlopen(argv[1], RTLD_NOW);
    if (!lib) {
        fprintf(stderr, "dlopen: %s\n", dlerror());
        return 2;
    }
    entry_point init = (entry_point)dlsym(lib, "sqlite3_ambit_init");
    if (!init) {
        fprintf(stderr, "dlsym: %s\n", dlerror());
        return 2;
    }
    sqlite3_api_routines api;
    memset(&api, 0, sizeof api);
    api.libversion_number = fake_libversion_number;
    api.malloc = fake_malloc;
    char *err = NULL;
    int rc = init(NULL, &err, &api);
    printf("rc=%d\nmessage=%s\n", rc, err ? err : "(none)");
    free(err);
    return 0;
}
