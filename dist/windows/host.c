/* A minimal SQLite host for dist/check-windows: runs a script of
 * sql-examples/ on a database with the SQLite amalgamation it is compiled
 * with, and prints every row of result sets while output goes to stdout, as
 * fields separated by '|', header first when headers are on. Of the shell's
 * dot-commands it follows .load, .output (stdout or anything else, which is
 * discarded), .once (discards the next statement's rows) and .headers; it
 * ignores the others (.bail: it always stops at the first error; .mode: it
 * always prints lists). Like the shell it provides writefile(path, data).
 *
 * Usage: host DATABASE SCRIPT */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "sqlite3.h"

static int printing = 1, once = 0, headers = 0;

static int row(void *first, int n, char **values, char **names) {
  if (!printing || once) return 0;
  if (headers && *(int *)first) {
    for (int i = 0; i < n; i++) printf("%s%s", i ? "|" : "", names[i]);
    printf("\n");
  }
  *(int *)first = 0;
  for (int i = 0; i < n; i++) printf("%s%s", i ? "|" : "", values[i] ? values[i] : "");
  printf("\n");
  return 0;
}

/* True when a line holds only spaces and a -- comment (the shell skips such
 * lines between statements). */
static int blank(const char *line) {
  while (*line == ' ' || *line == '\t' || *line == '\r' || *line == '\n') line++;
  return !*line || (line[0] == '-' && line[1] == '-');
}

static void writefile(sqlite3_context *c, int n, sqlite3_value **v) {
  const char *path = (const char *)sqlite3_value_text(v[0]);
  const void *data = sqlite3_value_blob(v[1]);
  int size = sqlite3_value_bytes(v[1]);
  FILE *out = path ? fopen(path, "wb") : 0;
  (void)n;
  if (!out) { sqlite3_result_error(c, "writefile: cannot open the file", -1); return; }
  fwrite(data, 1, (size_t)size, out);
  fclose(out);
  sqlite3_result_int64(c, size);
}

static char *arg(char *line) { /* the first argument of a dot-command */
  char *a = strchr(line, ' ');
  if (!a) return "";
  while (*a == ' ') a++;
  a[strcspn(a, "\r\n ")] = 0;
  return a;
}

int main(int argc, char **argv) {
  sqlite3 *db;
  char *err = 0, line[65536];
  if (argc != 3) { fprintf(stderr, "usage: host DATABASE SCRIPT\n"); return 2; }
  FILE *f = fopen(argv[2], "r");
  if (!f || sqlite3_open(argv[1], &db) != SQLITE_OK) { fprintf(stderr, "cannot open\n"); return 1; }
  sqlite3_enable_load_extension(db, 1);
  sqlite3_create_function(db, "writefile", 2, SQLITE_UTF8, 0, writefile, 0, 0);
  size_t cap = 1 << 20, len = 0;
  char *sql = malloc(cap);
  sql[0] = 0;
  while (fgets(line, sizeof line, f)) {
    if (len == 0 && blank(line)) continue;
    if (len == 0 && line[0] == '.') {
      if (!strncmp(line, ".load ", 6)) {
        if (sqlite3_load_extension(db, arg(line), 0, &err) != SQLITE_OK) {
          fprintf(stderr, "Error: %s\n", err);
          return 1;
        }
      } else if (!strncmp(line, ".output", 7)) {
        printing = !strcmp(arg(line), "stdout") || !*arg(line);
      } else if (!strncmp(line, ".once", 5)) {
        once = 1;
      } else if (!strncmp(line, ".headers ", 9)) {
        headers = !strcmp(arg(line), "on");
      }
      continue;
    }
    size_t n = strlen(line);
    if (len + n + 1 > cap) { cap = 2 * (len + n + 1); sql = realloc(sql, cap); }
    memcpy(sql + len, line, n + 1);
    len += n;
    if (sqlite3_complete(sql)) {
      int first = 1;
      if (sqlite3_exec(db, sql, row, &first, &err) != SQLITE_OK) {
        fprintf(stderr, "Error: %s\n", err);
        return 1;
      }
      once = 0;
      len = 0;
      sql[0] = 0;
    }
  }
  sqlite3_close(db);
  return 0;
}
