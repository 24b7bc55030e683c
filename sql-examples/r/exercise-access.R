# exercise-access.R: the access-to-exercise indicator from R with RSQLite.
#
# Runs the SQL of sql-examples/exercise-access.sql on a copy of the demo
# database and reads the county table into a data.frame. Usage, from the
# repository folder (the map is written to results/ of the current folder):
#
#     mkdir -p results && cp demo-db/demo-region.gpkg results/exercise-access-r.gpkg
#     Rscript sql-examples/r/exercise-access.R LIBRARY results/exercise-access-r.gpkg
#
# (a third argument names a CSV file to write the data.frame to).
# LIBRARY is the path of ambit's library: libambit.so (Linux),
# libambit.dylib (macOS) or libambit.dll (Windows); a built tree has
# target/release/libambit.so, the Python package says where its copy is
# (python3 -c "import ambit_sqlite; print(ambit_sqlite.library_path())").
# Needs the R packages DBI and RSQLite (Debian: r-cran-rsqlite), whose
# SQLite must be 3.34.1 or newer.

library(DBI)

args <- commandArgs(trailingOnly = TRUE)
if (!length(args) %in% 2:3) stop("usage: Rscript exercise-access.R LIBRARY DATABASE [CSV]")
library_path <- normalizePath(args[1], mustWork = TRUE)
script <- file.path(dirname(normalizePath(sub("^--file=", "",
  grep("^--file=", commandArgs(), value = TRUE)[1]))), "..", "exercise-access.sql")

con <- dbConnect(RSQLite::SQLite(), args[2], loadable.extensions = TRUE)
# SQLite derives the entry point (sqlite3_ambit_init) from the file name.
invisible(dbGetQuery(con, "SELECT load_extension(?)", params = list(library_path)))

# The script's SQL, one statement at a time: the shell's dot-commands
# (lines starting with '.') only set its output, so they are skipped; a
# statement ends at a line ending with ';' (comments stripped), which holds
# for this script. The shell's writefile('path', data) is done here in R.
lines <- readLines(script, encoding = "UTF-8")
lines <- lines[!startsWith(lines, ".")]
statement <- character(0)
for (line in lines) {
  statement <- c(statement, line)
  if (!grepl(";\\s*$", sub("--.*$", "", line))) next
  sql <- paste(statement, collapse = "\n")
  statement <- character(0)
  if (!grepl("[^[:space:]]", gsub("--[^\n]*", "", sql))) next
  target <- regmatches(sql, regexec("SELECT writefile\\('([^']*)',", sql))[[1]]
  if (length(target) == 2) {
    value <- dbGetQuery(con, sub("SELECT writefile\\('[^']*',", "SELECT (", sql))[[1]]
    writeLines(value, target[2], sep = "")
  } else if (grepl("^\\s*SELECT", gsub("(^|\n)\\s*--[^\n]*", "", sql))) {
    invisible(dbGetQuery(con, sql))
  } else {
    invisible(dbExecute(con, sql))
  }
}

county <- dbGetQuery(con, "
  SELECT county_geoid AS county, county_name AS name, blocks, population,
         population_with_access AS with_access, pct_with_access AS pct
  FROM county_access ORDER BY county_geoid")
dbDisconnect(con)
print(county, row.names = FALSE)
if (length(args) == 3) write.csv(county, args[3], row.names = FALSE)
