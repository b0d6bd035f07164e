/*
 * files.c - writing an output file atomically.
 *
 * The content goes to a temporary file in the target's folder, is flushed and
 * fsynced, and the file is renamed into place only when the writer succeeded,
 * so an interrupted or failed write never leaves half a file.  Special files
 * (/dev/stdout, a pipe) are written directly since they cannot be renamed
 * onto; "-" is standard output.  Also the one way CSV fields are written
 * (results.csv, points.csv).
 */
#include "files.h"

#include <csv.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "number.h"
#include "util.h"

/* mkdir -p for the folder part of path. */
static arrank_status make_parent(const char *path, arrank_error *err)
{
    char *dir = arrank_strdup(path);
    if (!dir)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    char *slash = strrchr(dir, '/');
    if (!slash || slash == dir) {
        free(dir);
        return ARRANK_OK;
    }
    *slash = '\0';
    for (char *p = dir + 1; ; p++) {
        if (*p == '/' || *p == '\0') {
            char save = *p;
            *p = '\0';
            if (mkdir(dir, 0777) != 0 && errno != EEXIST) {
                arrank_status st = arrank_errorf(err, ARRANK_EIO, "cannot create folder '%s': %s",
                                                 dir, strerror(errno));
                free(dir);
                return st;
            }
            *p = save;
            if (save == '\0')
                break;
        }
    }
    free(dir);
    return ARRANK_OK;
}

arrank_status arrank_files_save(const char *path, arrank_files_writer writer, void *ctx,
                                arrank_error *err)
{
    if (strcmp(path, "-") == 0) {
        arrank_status st = writer(stdout, ctx, err);
        if (st == ARRANK_OK && fflush(stdout) != 0)
            return arrank_errorf(err, ARRANK_EIO, "cannot write to standard output: %s",
                                 strerror(errno));
        return st;
    }
    struct stat sb;
    if (stat(path, &sb) == 0 && !S_ISREG(sb.st_mode)) {
        /* a device or pipe: write in place */
        FILE *f = fopen(path, "w");
        if (!f)
            return arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        arrank_status st = writer(f, ctx, err);
        int bad = fclose(f) != 0;
        if (st == ARRANK_OK && bad)
            st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        else if (st == ARRANK_EIO)
            arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        return st;
    }
    arrank_status st = make_parent(path, err);
    if (st != ARRANK_OK)
        return st;
    size_t n = strlen(path) + 16;
    char *tmp = malloc(n);
    if (!tmp)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    snprintf(tmp, n, "%s.tmpXXXXXX", path);
    int fd = mkstemp(tmp);
    if (fd < 0) {
        st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        free(tmp);
        return st;
    }
    FILE *f = fdopen(fd, "w");
    if (!f) {
        st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
        close(fd);
        unlink(tmp);
        free(tmp);
        return st;
    }
    st = writer(f, ctx, err);
    int saved_errno = 0;
    if (fflush(f) != 0 || fsync(fileno(f)) != 0)
        saved_errno = errno ? errno : EIO;
    if (fclose(f) != 0 && !saved_errno)
        saved_errno = errno ? errno : EIO;
    if (st == ARRANK_OK && saved_errno)
        st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(saved_errno));
    else if (st == ARRANK_EIO)
        arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path,
                      strerror(saved_errno ? saved_errno : EIO));
    if (st == ARRANK_OK) {
        /* mkstemp makes 0600; results are ordinary files */
        mode_t mask = umask(0);
        umask(mask);
        chmod(tmp, 0666 & ~mask);
        if (rename(tmp, path) != 0)
            st = arrank_errorf(err, ARRANK_EIO, "cannot write '%s': %s", path, strerror(errno));
    }
    if (st != ARRANK_OK)
        unlink(tmp);
    free(tmp);
    return st;
}


/* ---- CSV fields ----------------------------------------------------------- */

void arrank_files_csv_flush(arrank_csv_row *row)
{
    if (row->n)
        fwrite(row->buf, 1, row->n, row->f);
    row->n = 0;
}

/* Room for len more bytes in the row; 0 when they cannot fit even after a flush. */
static int row_room(arrank_csv_row *row, size_t len)
{
    if (sizeof row->buf - row->n < len)
        arrank_files_csv_flush(row);
    return sizeof row->buf - row->n >= len;
}

static void row_end(arrank_csv_row *row, int last)
{
    if (!row_room(row, 1))
        return;
    row->buf[row->n++] = last ? '\n' : ',';
    if (last && row->n > sizeof row->buf / 2)
        arrank_files_csv_flush(row);
}

void arrank_files_csv_field(arrank_csv_row *row, const char *s, int last)
{
    size_t n = strlen(s);
    if (strpbrk(s, ",\"\r\n") || (n && (s[0] == ' ' || s[n - 1] == ' '))) {
        arrank_files_csv_flush(row);
        csv_fwrite(row->f, s, n);
    } else if (row_room(row, n)) {
        memcpy(row->buf + row->n, s, n);
        row->n += n;
    } else {
        fwrite(s, 1, n, row->f);
    }
    row_end(row, last);
}

void arrank_files_csv_num(arrank_csv_row *row, double v, int last)
{
    if (isfinite(v) && row_room(row, 64)) {
        int len = arrank_format_general(row->buf + row->n, 64, 10, v); /* "%.10g", number.c */
        if (len > 0 && len < 64)
            row->n += (size_t)len;
    }
    row_end(row, last);
}

/*
 * The items on the workers, CSV_BLOCK at a time: worker w formats a
 * contiguous share of the block into a memory stream of its own, then the
 * streams are written in order.  A block bounds the memory held to a few
 * megabytes whatever the table's size (as the JSON writer's, json.c).
 */
#define CSV_BLOCK 2048
#define CSV_MIN_PER_WORKER 256
#define CSV_MAX_WORKERS 8

typedef struct {
    void (*item)(void *ctx, size_t i, arrank_csv_row *row);
    void *ctx;
    size_t from, to, workers;
    arrank_csv_row *row[CSV_MAX_WORKERS];
    char *mem[CSV_MAX_WORKERS];
    size_t len[CSV_MAX_WORKERS];
    int failed[CSV_MAX_WORKERS];
} csv_job;

static void csv_worker(void *ctx, size_t w)
{
    csv_job *j = ctx;
    size_t lo, hi;
    arrank_workers_share(j->from, j->to, j->workers, w, &lo, &hi);
    arrank_csv_row *row = j->row[w];
    j->mem[w] = NULL;
    j->len[w] = 0;
    row->f = open_memstream(&j->mem[w], &j->len[w]);
    row->n = 0;
    if (!row->f) {
        j->failed[w] = 1;
        return;
    }
    for (size_t i = lo; i < hi; i++)
        j->item(j->ctx, i, row);
    arrank_files_csv_flush(row);
    j->failed[w] = ferror(row->f) != 0;
    j->failed[w] |= fclose(row->f) != 0;
    row->f = NULL;
}

arrank_status arrank_files_csv_items(size_t n, void (*item)(void *ctx, size_t i,
                                                             arrank_csv_row *row),
                                     void *ctx, FILE *f, arrank_error *err)
{
    csv_job *j = calloc(1, sizeof *j);
    if (!j)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    j->item = item;
    j->ctx = ctx;
    j->workers = arrank_workers_for(n, CSV_MIN_PER_WORKER);
    if (j->workers > CSV_MAX_WORKERS)
        j->workers = CSV_MAX_WORKERS;
    arrank_status st = ARRANK_OK;
    for (size_t w = 0; w < j->workers && st == ARRANK_OK; w++)
        if (!(j->row[w] = malloc(sizeof *j->row[w])))
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    for (size_t from = 0; from < n && st == ARRANK_OK; from += CSV_BLOCK) {
        j->from = from;
        j->to = from + CSV_BLOCK < n ? from + CSV_BLOCK : n;
        if (j->workers > 1)
            arrank_workers_run(j->workers, csv_worker, j);
        else
            csv_worker(j, 0);
        for (size_t w = 0; w < j->workers; w++) {
            if (j->failed[w] && st == ARRANK_OK)
                st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            if (st == ARRANK_OK && j->len[w] && fwrite(j->mem[w], 1, j->len[w], f) != j->len[w])
                st = arrank_errorf(err, ARRANK_EIO, "write failed");
            free(j->mem[w]);
            j->mem[w] = NULL;
        }
    }
    for (size_t w = 0; w < j->workers; w++)
        free(j->row[w]);
    free(j);
    return st;
}
