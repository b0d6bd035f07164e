/*
 * campaign.c - reading a campaign folder: the list of its sample files, each
 * file read (on worker threads after the first), campaign.ini applied, the
 * report unit, the ids checked, rates derived from conversion.
 *
 * The first sample in name order sets the report unit (unless campaign.ini
 * does), and every other is converted to it as it is read (sample.c).  Input
 * files are only ever opened for reading.
 */
#include "arrank/campaign.h"
#include "ini_internal.h"
#include "sample_internal.h"
#include "units_internal.h"
#include "util.h"
#include "number.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define UNIT_MAX 256

static int has_csv_extension(const char *name)
{
    size_t n = strlen(name);
    return n > 4 && arrank_ascii_casecmp(name + n - 4, ".csv") == 0;
}

/*
 * Read the whole file name (in the folder open as dirfd; path is for
 * messages) into *buf (grown as needed, reused between files): fstat for its
 * kind and size, then reads to the end.  O_NONBLOCK keeps a FIFO from hanging
 * the open; it is refused just after.
 */
static arrank_status read_file(int dirfd, const char *name, const char *path, char **buf,
                               size_t *cap, size_t *len, struct stat *st_out, arrank_error *err)
{
    char os[256];
    int fd = openat(dirfd, name, O_RDONLY | O_NONBLOCK | O_CLOEXEC);
    if (fd < 0) {
        arrank_os_message(errno, os, sizeof os);
        return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot open the file: %s", os);
    }
    struct stat sb;
    if (fstat(fd, &sb) != 0) {
        arrank_os_message(errno, os, sizeof os);
        close(fd);
        return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot read the file: %s", os);
    }
    if (!S_ISREG(sb.st_mode)) {
        close(fd);
        return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "not a regular file");
    }
    if (st_out)
        *st_out = sb;
    if (sb.st_size > ARRANK_CAMPAIGN_MAX_FILE_BYTES) {
        close(fd);
        return arrank_error_at(err, ARRANK_ELIMIT, path, 0, 0, "the file is larger than %ld bytes",
                               ARRANK_CAMPAIGN_MAX_FILE_BYTES);
    }
    size_t got = 0, want = (size_t)sb.st_size + 1; /* +1 notices a file that grew meanwhile */
    for (;;) {
        if (arrank_grow((void **)buf, cap, want, 1) != 0) {
            close(fd);
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory reading a file");
        }
        ssize_t r = read(fd, *buf + got, want - got);
        if (r < 0 && errno == EINTR)
            continue;
        if (r < 0) {
            arrank_os_message(errno, os, sizeof os);
            close(fd);
            return arrank_error_at(err, ARRANK_EIO, path, 0, 0, "cannot read the file: %s", os);
        }
        if (r == 0)
            break;
        got += (size_t)r;
        if (got == (size_t)sb.st_size && got < want)
            break; /* the size fstat gave, and the byte past it not there: the end
                      (a regular file's read is short only at its end, POSIX read()) */
        if (got == want) {
            if (want > (size_t)ARRANK_CAMPAIGN_MAX_FILE_BYTES) {
                close(fd);
                return arrank_error_at(err, ARRANK_ELIMIT, path, 0, 0,
                                       "the file is larger than %ld bytes",
                                       ARRANK_CAMPAIGN_MAX_FILE_BYTES);
            }
            want *= 2;
        }
    }
    close(fd);
    *len = got;
    return ARRANK_OK;
}

static int compare_names(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

static int compare_sample_ids(const void *a, const void *b)
{
    const arrank_sample *x = *(const arrank_sample *const *)a;
    const arrank_sample *y = *(const arrank_sample *const *)b;
    int c = strcmp(x->id, y->id);
    return c ? c : strcmp(x->file, y->file);
}

size_t arrank_campaign_part(const arrank_campaign *campaign, size_t i)
{
    return campaign->part_of && i < campaign->n_samples ? campaign->part_of[i] : 0;
}

const char *arrank_campaign_own_id(const arrank_campaign *campaign, size_t i)
{
    if (campaign->part_ids && i < campaign->n_samples && campaign->part_ids[i])
        return campaign->part_ids[i];
    return campaign->samples[i].id;
}

void arrank_campaign_free(arrank_campaign *campaign)
{
    if (!campaign)
        return;
    for (size_t i = 0; i < campaign->n_samples; i++)
        arrank_sample_clear(&campaign->samples[i]);
    free(campaign->samples);
    free(campaign->path);
    free(campaign->name);
    free(campaign->title);
    free(campaign->rate_unit);
    free(campaign->reference);
    arrank_list_free(campaign->part_names, campaign->n_parts);
    free(campaign->part_of);
    arrank_list_free(campaign->part_ids, campaign->part_of ? campaign->n_samples : 0);
    arrank_list_free(campaign->notes, campaign->n_notes);
    arrank_list_free(campaign->unused, campaign->n_unused);
    free(campaign);
}

/* Files arrank itself writes (plot, report, --csv/--json): never read as samples. */
static int own_output(const char *name)
{
    static const char *const outputs[] = {"results.csv", "points.csv", "plan.csv",
                                           "results.json", "report.html"};
    for (size_t i = 0; i < sizeof outputs / sizeof outputs[0]; i++)
        if (strcmp(name, outputs[i]) == 0)
            return 1;
    return 0;
}

/* Sorted list of the *.csv names in dir (hidden files and arrank's own
   outputs skipped; those go to *outputs). */
static arrank_status list_folder(const char *dir, char ***names, size_t *n, int *has_ini,
                                 char ***outputs, size_t *n_outputs, arrank_error *err)
{
    char os[256];
    DIR *d = opendir(dir);
    if (!d) {
        arrank_os_message(errno, os, sizeof os);
        return arrank_error_at(err, ARRANK_EIO, dir, 0, 0, "cannot read the folder: %s", os);
    }
    size_t cap = 0;
    *names = NULL;
    *n = 0;
    *has_ini = 0;
    struct dirent *e;
    errno = 0;
    while ((e = readdir(d)) != NULL) {
        if (e->d_name[0] == '.')
            continue;
        if (strcmp(e->d_name, "campaign.ini") == 0)
            *has_ini = 1;
        if (own_output(e->d_name)) {
            size_t ocap = *n_outputs;
            if (arrank_list_add(outputs, n_outputs, &ocap, e->d_name) != 0) {
                closedir(d);
                arrank_list_free(*names, *n);
                *names = NULL;
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory listing the folder");
            }
            continue;
        }
        if (!has_csv_extension(e->d_name))
            continue;
        if (*n >= (size_t)ARRANK_CAMPAIGN_MAX_FILES) {
            closedir(d);
            arrank_list_free(*names, *n);
            *names = NULL;
            return arrank_error_at(err, ARRANK_ELIMIT, dir, 0, 0,
                                   "more than %ld sample files in the folder",
                                   ARRANK_CAMPAIGN_MAX_FILES);
        }
        if (arrank_list_add(names, n, &cap, e->d_name) != 0) {
            closedir(d);
            arrank_list_free(*names, *n);
            *names = NULL;
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory listing the folder");
        }
        errno = 0;
    }
    int saved = errno;
    closedir(d);
    if (saved) {
        arrank_list_free(*names, *n);
        *names = NULL;
        arrank_os_message(saved, os, sizeof os);
        return arrank_error_at(err, ARRANK_EIO, dir, 0, 0, "cannot read the folder: %s", os);
    }
    if (*n > 1)
        qsort(*names, *n, sizeof **names, compare_names);
    return ARRANK_OK;
}

/* Read campaign.ini of the folder into *ini. */
static arrank_status read_ini(const char *dir, int dirfd, arrank_units *units, arrank_ini *ini,
                              char **buf, size_t *cap, arrank_error *err)
{
    char *path = arrank_join_path(dir, "campaign.ini");
    if (!path)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    size_t len = 0;
    arrank_status s = read_file(dirfd, "campaign.ini", path, buf, cap, &len, NULL, err);
    if (s == ARRANK_OK)
        s = arrank_ini_parse(path, *buf, len, units, ini, err);
    free(path);
    return s;
}

/* [campaign] of campaign.ini into c, which takes over its strings and notes;
   *notes_cap gets the room of c->notes. */
static void take_ini(arrank_ini *ini, arrank_campaign *c, size_t *notes_cap)
{
    c->title = ini->title;
    c->operating_temp_K = ini->operating_temp_K;
    c->confidence = ini->confidence;
    c->max_temp_K = ini->max_temp_K;
    c->rate_unit = ini->rate_unit;
    c->reference = ini->reference;
    ini->reference = NULL;
    if (ini->rate_unit)
        c->basis = ini->basis;
    c->notes = ini->notes;
    c->n_notes = ini->n_notes;
    *notes_cap = ini->notes_cap;
    ini->title = ini->rate_unit = NULL;
    ini->notes = NULL;
    ini->n_notes = ini->notes_cap = 0;
}

/* Apply [sample ID] sections of campaign.ini to the samples (sorted by id in index). */
static arrank_status apply_ini_entries(const arrank_ini *ini, arrank_campaign *c,
                                       size_t *notes_cap, arrank_sample **index, size_t n,
                                       const char *ini_path, arrank_error *err)
{
    for (size_t i = 0; i < ini->n_entries; i++) {
        const arrank_ini_entry *e = &ini->entries[i];
        size_t lo = 0, hi = n;
        while (lo < hi) {
            size_t mid = lo + (hi - lo) / 2;
            if (strcmp(index[mid]->id, e->section_id) < 0)
                lo = mid + 1;
            else
                hi = mid;
        }
        if (lo == n || strcmp(index[lo]->id, e->section_id) != 0) {
            if (n == 0 && c->n_samples > 0) /* every file skipped: no note for each key */
                continue;
            /* One note per section, not per key. */
            if (i > 0 && strcmp(ini->entries[i - 1].section_id, e->section_id) == 0)
                continue;
            char note[ARRANK_ERROR_MSG_MAX];
            snprintf(note, sizeof note, "campaign.ini:%ld: section [sample %s] matches no sample",
                     e->line, e->section_id);
            if (arrank_list_add(&c->notes, &c->n_notes, notes_cap, note) != 0)
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
            continue;
        }
        /* files merged into one sample: each gets the section's keys */
        for (size_t k = lo; k < n && strcmp(index[k]->id, e->section_id) == 0; k++)
            if (arrank_sample_add_meta(index[k], e->key, e->value, ini_path, e->line) != 0)
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    return ARRANK_OK;
}

/* What a load holds while it runs; load_free releases all but the campaign. */
typedef struct {
    const char *dir;
    arrank_units *units;
    arrank_load_options opt;
    char **names;
    size_t n_names;
    char **outputs; /* arrank's own outputs found in the folder */
    size_t n_outputs;
    int has_ini;
    int dirfd;
    arrank_ini ini;
    size_t notes_cap; /* room of c->notes */
    size_t unused_cap; /* room of c->unused */
    char *buf;        /* the read buffer of the calling thread */
    size_t cap;
    uint64_t *hash;   /* [n_names]: FNV-1a of each file's bytes (merging only) */
    size_t *size;     /* [n_names]: bytes of each file */
    unsigned char *drop; /* [n_names]: 1 when the sample is not kept (copy, merged) */
    arrank_sample **index; /* the samples sorted by id (none dropped or skipped) */
    size_t n_index;
    arrank_campaign *c;
} load_state;

static uint64_t hash_bytes(const char *s, size_t n)
{
    /* FNV-1a, 64-bit offset basis and prime (Fowler, Noll, Vo; public domain). */
    uint64_t h = 1469598103934665603ULL;
    for (size_t i = 0; i < n; i++) {
        h ^= (unsigned char)s[i];
        h *= 1099511628211ULL;
    }
    return h;
}

/*
 * A file that could not be read, as a sample: the file stem as its id, no
 * points, `skipped`, and the error as its problem (at its line and column;
 * an error in another file, campaign.ini, is named in the text).
 */
static arrank_status skip_file(arrank_sample *s, const char *path, const arrank_error *why,
                               arrank_error *err)
{
    arrank_sample_clear(s);
    const char *base = arrank_base_name(path);
    size_t n = strlen(base);
    if (has_csv_extension(base))
        n -= 4;
    s->path = strdup(path);
    s->file = strdup(base);
    s->id = arrank_dup_range(base, n);
    if (why->path[0] && strcmp(why->path, path) != 0) {
        char msg[ARRANK_ERROR_MSG_MAX + 64];
        snprintf(msg, sizeof msg, "%s:%ld: %s", arrank_base_name(why->path), why->line,
                 why->message);
        s->problem = strdup(msg);
    } else {
        s->problem = strdup(why->message);
        s->problem_line = why->line;
        s->problem_column = why->column;
    }
    s->skipped = 1;
    if (!s->path || !s->file || !s->id || !s->problem)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    return ARRANK_OK;
}

/* Read and parse file i of the folder into its sample; in a lenient load a
   file that cannot be read becomes a skipped sample. */
static arrank_status load_one(load_state *ls, size_t i, const char *report_unit, char **buf,
                              size_t *cap, arrank_error *err)
{
    const char *name = ls->names[i];
    arrank_sample *sample = &ls->c->samples[i];
    char *path = arrank_join_path(ls->dir, name);
    if (!path)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    size_t len = 0;
    arrank_read_options ro = {ls->opt.strict};
    arrank_error fe;
    arrank_error_clear(&fe);
    struct stat sb;
    memset(&sb, 0, sizeof sb);
    arrank_status st = read_file(ls->dirfd, name, path, buf, cap, &len, &sb, &fe);
    if (st == ARRANK_OK) {
        if (ls->hash) {
            ls->hash[i] = hash_bytes(*buf, len);
            ls->size[i] = len;
        }
        st = arrank_sample_parse_deferred(path, *buf, len, ls->units, report_unit, &ro, sample,
                                          &fe);
    }
    if (st != ARRANK_OK && st != ARRANK_ENOMEM && !ls->opt.strict)
        st = skip_file(sample, path, &fe, err);
    else if (st != ARRANK_OK && err)
        *err = fe;
    sample->file_dev = (unsigned long long)sb.st_dev; /* the file as read; 0 if never opened */
    sample->file_ino = (unsigned long long)sb.st_ino;
    free(path);
    return st;
}

/*
 * Files after the first read on the workers (arrank_workers_each, util.c),
 * each worker with its own read buffer.  A sample depends only on its file
 * and the report unit, so the result is the same for any number of workers,
 * and the error is the first failing file's in name order.
 */
#define LOAD_CHUNK 16
#define LOAD_MIN_PER_WORKER 64
#define LOAD_MAX_WORKERS 8

typedef struct {
    load_state *ls;
    char *buf[LOAD_MAX_WORKERS];
    size_t cap[LOAD_MAX_WORKERS];
} load_job;

static arrank_status load_item(void *ctx, size_t i, size_t w, arrank_error *err)
{
    load_job *j = ctx;
    return load_one(j->ls, i, j->ls->c->rate_unit, &j->buf[w], &j->cap[w], err);
}

static arrank_status load_rest(load_state *ls, size_t first, arrank_progress_fn progress,
                               void *progress_ctx, arrank_error *err)
{
    size_t n = ls->n_names;
    if (first >= n)
        return ARRANK_OK;
    load_job j;
    memset(&j, 0, sizeof j);
    j.ls = ls;
    size_t workers = arrank_workers_for(n - first, LOAD_MIN_PER_WORKER);
    if (workers > LOAD_MAX_WORKERS)
        workers = LOAD_MAX_WORKERS;
    arrank_status st = arrank_workers_each(first, n, LOAD_CHUNK, workers, load_item, &j, progress,
                                           progress_ctx, "reading samples", err);
    for (size_t w = 0; w < LOAD_MAX_WORKERS; w++)
        free(j.buf[w]);
    return st;
}

static void load_free(load_state *ls)
{
    free(ls->index);
    free(ls->buf);
    free(ls->hash);
    free(ls->size);
    free(ls->drop);
    arrank_ini_free(&ls->ini);
    arrank_list_free(ls->names, ls->n_names);
    arrank_list_free(ls->outputs, ls->n_outputs);
    if (ls->dirfd >= 0)
        close(ls->dirfd);
}

/* Load step 1: the folder listed, the unit database ready, the folder open. */
static arrank_status open_folder(load_state *ls, arrank_error *err)
{
    arrank_status st = list_folder(ls->dir, &ls->names, &ls->n_names, &ls->has_ini,
                                   &ls->outputs, &ls->n_outputs, err);
    if (st != ARRANK_OK)
        return st;
    if (ls->n_names == 0)
        return arrank_error_at(err, ARRANK_EDATA, ls->dir, 0, 0,
                               "no sample files (*.csv) in the folder");
    /* A database read in the background (arrank_units_create_background) has
       had the listing's time; from here on it is needed. */
    st = arrank_units_ready(ls->units, err);
    if (st != ARRANK_OK)
        return st;
    /* Files are opened relative to the folder: no path walk per file. */
    ls->dirfd = open(ls->dir, O_RDONLY | O_DIRECTORY | O_CLOEXEC);
    if (ls->dirfd < 0) {
        char os[256];
        arrank_os_message(errno, os, sizeof os);
        return arrank_error_at(err, ARRANK_EIO, ls->dir, 0, 0, "cannot read the folder: %s", os);
    }
    if (!ls->opt.no_merge) {
        ls->hash = calloc(ls->n_names, sizeof *ls->hash);
        ls->size = calloc(ls->n_names, sizeof *ls->size);
        if (!ls->hash || !ls->size)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    }
    return ARRANK_OK;
}

/* Add a campaign note (printf-style); -1 when out of memory. */
static int campaign_note(load_state *ls, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

static int campaign_note(load_state *ls, const char *fmt, ...)
{
    char note[ARRANK_ERROR_MSG_MAX];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(note, sizeof note, fmt, ap);
    va_end(ap);
    return arrank_list_add(&ls->c->notes, &ls->c->n_notes, &ls->notes_cap, note);
}

/* Load step 2: the campaign with its path, name and campaign.ini. */
static arrank_status new_campaign(load_state *ls, arrank_error *err)
{
    const char *dir = ls->dir;
    arrank_campaign *c = ls->c = calloc(1, sizeof *c);
    if (!c)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    c->operating_temp_K = NAN;
    c->confidence = NAN;
    c->max_temp_K = NAN;
    c->n_files = ls->n_names;
    c->path = strdup(dir);
    /* Folder name without trailing slashes. */
    size_t n = strlen(dir);
    while (n > 1 && dir[n - 1] == '/')
        n--;
    size_t b = n;
    while (b > 0 && dir[b - 1] != '/')
        b--;
    c->name = arrank_dup_range(dir + b, n - b);
    if (!c->path || !c->name)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    if (ls->has_ini) {
        arrank_status st = read_ini(dir, ls->dirfd, ls->units, &ls->ini, &ls->buf, &ls->cap, err);
        if (st != ARRANK_OK)
            return st;
        take_ini(&ls->ini, c, &ls->notes_cap);
    }
    if (!c->title && !(c->title = strdup(c->name)))
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    for (size_t i = 0; i < ls->n_outputs; i++)
        if (campaign_note(ls, "%s looks like an output of arrank; not read as a sample",
                          ls->outputs[i]) != 0)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    return ARRANK_OK;
}

/* Load step 3: the first readable sample (in name order), which sets the
   report unit the others are converted to unless campaign.ini has.  *next
   gets the index of the file after it. */
static arrank_status read_first(load_state *ls, size_t *next, arrank_error *err)
{
    arrank_campaign *c = ls->c;
    c->samples = calloc(ls->n_names, sizeof *c->samples);
    if (!c->samples)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    size_t i = 0;
    for (; i < ls->n_names; i++) {
        arrank_status st = load_one(ls, i, c->rate_unit, &ls->buf, &ls->cap, err);
        c->n_samples = i + 1;
        if (st != ARRANK_OK)
            return st;
        if (!c->samples[i].skipped)
            break;
    }
    *next = i + 1;
    if (c->rate_unit) /* campaign.ini has set it */
        return ARRANK_OK;
    char spelled[UNIT_MAX];
    /* no file readable: the derived-rate unit, so that the campaign is whole */
    const char *u = i < ls->n_names ? c->samples[i].rate_unit_file
                                    : ARRANK_SAMPLE_DERIVED_RATE_UNIT;
    if (arrank_units_spelling(u, spelled, sizeof spelled) != 0)
        snprintf(spelled, sizeof spelled, "%s", u);
    if (!(c->rate_unit = strdup(spelled)))
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    c->basis = i < ls->n_names ? c->samples[i].basis : ARRANK_BASIS_MASS;
    return ARRANK_OK;
}

/* Whether files a and b of the folder hold the same bytes (read again, both;
   only for files of one sample id with equal hashes and sizes). */
static int same_bytes(load_state *ls, size_t a, size_t b)
{
    char *bufa = NULL, *bufb = NULL;
    size_t capa = 0, capb = 0, lena = 0, lenb = 0;
    arrank_error ignored;
    int same = read_file(ls->dirfd, ls->names[a], ls->names[a], &bufa, &capa, &lena, NULL, &ignored) ==
                   ARRANK_OK &&
               read_file(ls->dirfd, ls->names[b], ls->names[b], &bufb, &capb, &lenb, NULL, &ignored) ==
                   ARRANK_OK &&
               lena == lenb && memcmp(bufa, bufb, lena) == 0;
    free(bufa);
    free(bufb);
    return same;
}

/* Load step 8a: in a group of files with one sample id, a file
   byte-identical to another (a copy left in the folder) is not used; a note
   names the one kept (the shorter name: 'MT-A1.csv' beside 'MT-A1 -
   Copy.csv').  Files of different ids are different samples, whatever their
   bytes.  Returns how many of group[0..n) are left, moved to the front. */
static size_t drop_copies(load_state *ls, arrank_sample **group, size_t n, arrank_error *err,
                          arrank_status *st)
{
    arrank_campaign *c = ls->c;
    for (size_t a = 0; a < n; a++)
        for (size_t b = a + 1; b < n; b++) {
            size_t i = (size_t)(group[a] - c->samples), j = (size_t)(group[b] - c->samples);
            if (ls->drop[i] || ls->drop[j] || ls->hash[i] != ls->hash[j] ||
                ls->size[i] != ls->size[j] || !same_bytes(ls, i, j))
                continue;
            size_t copy = strlen(ls->names[j]) < strlen(ls->names[i]) ? i : j;
            size_t kept = copy == i ? j : i;
            ls->drop[copy] = 1;
            char line[ARRANK_ERROR_PATH_MAX + 128];
            snprintf(line, sizeof line, "%s: byte-identical to %s; not used",
                     c->samples[copy].path, ls->names[kept]);
            if (arrank_list_add(&c->unused, &c->n_unused, &ls->unused_cap, line) != 0 ||
                campaign_note(ls, "%s is byte-identical to %s; not used", ls->names[copy],
                              ls->names[kept]) != 0) {
                *st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
                return 0;
            }
        }
    size_t left = 0;
    for (size_t a = 0; a < n; a++)
        if (!ls->drop[group[a] - c->samples])
            group[left++] = group[a];
    return left;
}

/* Load step 6: sample ids must be unique unless files are merged; sort an
   index rather than compare all pairs (the index, by id, then finds
   campaign.ini's sections).  Dropped copies and skipped files are left out. */
static arrank_status check_ids(load_state *ls, arrank_error *err)
{
    arrank_campaign *c = ls->c;
    arrank_sample **index = ls->index = malloc((c->n_samples ? c->n_samples : 1) * sizeof *index);
    if (!index)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    size_t n = 0;
    for (size_t i = 0; i < c->n_samples; i++)
        if (!ls->drop[i] && !c->samples[i].skipped)
            index[n++] = &c->samples[i];
    qsort(index, n, sizeof *index, compare_sample_ids);
    ls->n_index = n;
    if (!ls->opt.no_merge)
        return ARRANK_OK;
    for (size_t i = 1; i < n; i++) {
        if (strcmp(index[i]->id, index[i - 1]->id) != 0)
            continue;
        const arrank_sample *s = index[i];
        long line = 0;
        for (size_t k = s->n_meta; k-- > 0;)
            if (arrank_ascii_casecmp(s->meta[k].key, "sample") == 0) {
                line = s->meta[k].line;
                break;
            }
        return arrank_error_at(err, ARRANK_EPARSE, s->path, line, 0,
                               "sample id '%s' is also the id of %s", s->id, index[i - 1]->file);
    }
    return ARRANK_OK;
}
/* Load step 7: campaign.ini's [sample ID] keys, then the rates derived from
   conversion, which need every metadata entry, campaign.ini's included. */
static arrank_status finish_samples(load_state *ls, arrank_error *err)
{
    arrank_campaign *c = ls->c;
    if (ls->ini.n_entries) {
        char *ini_path = arrank_join_path(ls->dir, "campaign.ini");
        if (!ini_path)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
        arrank_status st = apply_ini_entries(&ls->ini, c, &ls->notes_cap, ls->index,
                                             ls->n_index, ini_path, err);
        free(ini_path);
        if (st != ARRANK_OK)
            return st;
    }
    for (size_t i = 0; i < c->n_samples; i++) {
        arrank_sample *s = &c->samples[i];
        if (!s->rates_derived || s->skipped || ls->drop[i])
            continue;
        arrank_error de;
        arrank_error_clear(&de);
        arrank_status st = arrank_sample_derive_rates(s, ls->units, c->rate_unit,
                                                      ls->opt.strict, &de);
        if (st != ARRANK_OK && st != ARRANK_ENOMEM && !ls->opt.strict) {
            char *path = strdup(s->path);
            st = path ? skip_file(s, path, &de, err)
                      : arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
            free(path);
        } else if (st != ARRANK_OK && err)
            *err = de;
        if (st != ARRANK_OK)
            return st;
    }
    return ARRANK_OK;
}

/* Index of label in *runs (added when new); -1 when out of memory. */
static int run_label(char ***runs, size_t *n, size_t *cap, const char *label)
{
    for (size_t i = 0; i < *n; i++)
        if (strcmp((*runs)[i], label) == 0)
            return (int)i;
    if (arrank_list_add(runs, n, cap, label) != 0)
        return -1;
    return (int)(*n - 1);
}

/* The files group[0..n) of one sample id made one sample, in group[0]: the
   points in file order, each file's points a run (its run column's labels,
   else the file name). */
static arrank_status merge_group(load_state *ls, arrank_sample **group, size_t n,
                                 arrank_error *err)
{
    arrank_sample *dst = group[0];
    size_t total = 0;
    for (size_t k = 0; k < n; k++)
        total += group[k]->n_points;
    arrank_point *pts = malloc((total ? total : 1) * sizeof *pts);
    char **runs = NULL, **src_files = calloc(n, sizeof *src_files),
         **src_units = calloc(n, sizeof *src_units);
    size_t n_runs = 0, runs_cap = 0, at = 0;
    int nomem = !pts || !src_files || !src_units;
    for (size_t k = 0; !nomem && k < n; k++) /* each point keeps its own file and unit */
        nomem = !(src_files[k] = arrank_strdup(group[k]->file)) ||
                (group[k]->temp_unit_file &&
                 !(src_units[k] = arrank_strdup(group[k]->temp_unit_file)));
    if (nomem) {
        free(pts);
        arrank_list_free(src_files, src_files ? n : 0);
        arrank_list_free(src_units, src_units ? n : 0);
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    }
    char files[768] = "";
    size_t used = 0;
    for (size_t k = 0; k < n; k++) {
        arrank_sample *s = group[k];
        int w = snprintf(files + used, sizeof files - used, "%s%s", k ? ", " : "", s->file);
        if (w > 0 && (size_t)w < sizeof files - used)
            used += (size_t)w;
        for (size_t i = 0; i < s->n_points; i++) {
            arrank_point p = s->points[i];
            const char *label = p.run >= 0 ? s->runs[p.run] : s->file;
            p.run = run_label(&runs, &n_runs, &runs_cap, label);
            if (p.run < 0) {
                free(pts);
                arrank_list_free(runs, n_runs);
                arrank_list_free(src_files, n);
                arrank_list_free(src_units, n);
                return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
            }
            p.source = (int)k;
            pts[at++] = p;
        }
    }
    /* the points (and their reasons) now belong to dst alone */
    size_t n_omitted = 0;
    for (size_t k = 0; k < n; k++) {
        n_omitted += group[k]->n_omitted;
        if (k > 0) {
            group[k]->n_points = 0;
            ls->drop[group[k] - ls->c->samples] = 1;
        }
    }
    free(dst->points);
    dst->points = pts;
    dst->n_points = total;
    dst->n_omitted = n_omitted;
    arrank_list_free(dst->runs, dst->n_runs);
    dst->runs = runs;
    dst->n_runs = n_runs;
    dst->source_files = src_files;
    dst->source_temp_units = src_units;
    dst->n_sources = n;
    char note[ARRANK_ERROR_MSG_MAX];
    snprintf(note, sizeof note,
             "sample '%s' is read from %zu files (%s), one run each unless a file has a run "
             "column; the metadata are those of %s",
             dst->id, n, files, dst->file);
    size_t cap = dst->n_notes;
    if (arrank_list_add(&dst->notes, &dst->n_notes, &cap, note) != 0 ||
        campaign_note(ls, "%s", note) != 0)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    if (!dst->rates_derived || dst->problem) { /* a problem of one file may not hold for all */
        free(dst->problem);
        dst->problem = NULL;
        dst->problem_line = 0;
        if (arrank_sample_fit_problem(dst) != 0)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    }
    return ARRANK_OK;
}

/* Load step 8: files with one sample id merged (the index is sorted by id,
   then file name), and the samples not kept removed, the rest in name order. */
static arrank_status merge_and_compact(load_state *ls, arrank_error *err)
{
    arrank_campaign *c = ls->c;
    for (size_t i = 0; !ls->opt.no_merge && i < ls->n_index;) {
        size_t j = i + 1;
        while (j < ls->n_index && strcmp(ls->index[j]->id, ls->index[i]->id) == 0)
            j++;
        if (j - i > 1) {
            arrank_status st = ARRANK_OK;
            size_t left = drop_copies(ls, ls->index + i, j - i, err, &st);
            if (st == ARRANK_OK && left > 1)
                st = merge_group(ls, ls->index + i, left, err);
            if (st != ARRANK_OK)
                return st;
        }
        i = j;
    }
    size_t kept = 0;
    for (size_t i = 0; i < c->n_samples; i++) {
        if (ls->drop[i]) {
            arrank_sample_clear(&c->samples[i]);
            continue;
        }
        if (c->samples[i].skipped) /* no data: the campaign's basis, so no basis check trips */
            c->samples[i].basis = c->basis;
        if (kept != i)
            c->samples[kept] = c->samples[i];
        kept++;
    }
    c->n_samples = kept;
    return ARRANK_OK;
}

arrank_status arrank_campaign_load(const char *dir, arrank_units *units, arrank_campaign **out,
                                   arrank_error *err)
{
    return arrank_campaign_load_progress(dir, units, NULL, NULL, out, err);
}

static arrank_status campaign_load_progress_in_c(const char *dir, arrank_units *units,
                                                 arrank_progress_fn progress, void *progress_ctx,
                                                 arrank_campaign **out, arrank_error *err)
{
    arrank_load_options strict = {1, 1};
    return arrank_campaign_load_with(dir, units, &strict, progress, progress_ctx, out, err);
}

arrank_status arrank_campaign_load_with(const char *dir, arrank_units *units,
                                        const arrank_load_options *opt,
                                        arrank_progress_fn progress, void *progress_ctx,
                                        arrank_campaign **out, arrank_error *err)
{
    if (out)
        *out = NULL;
    if (!dir || !units || !out)
        return arrank_errorf(err, ARRANK_EINVAL, "missing argument to arrank_campaign_load");
    load_state ls;
    memset(&ls, 0, sizeof ls);
    ls.dir = dir;
    ls.units = units;
    ls.dirfd = -1;
    if (opt)
        ls.opt = *opt;
    if (ls.opt.strict)
        ls.opt.no_merge = 1;
    arrank_status st = open_folder(&ls, err);
    if (st == ARRANK_OK)
        st = new_campaign(&ls, err);
    if (st == ARRANK_OK && !(ls.drop = calloc(ls.n_names, 1)))
        st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    size_t next = 0;
    if (st == ARRANK_OK)
        st = read_first(&ls, &next, err);
    if (st == ARRANK_OK) {
        /* Load step 4: the rest, on the workers. */
        if (progress)
            progress(progress_ctx, "reading samples", next, ls.n_names);
        st = load_rest(&ls, next, progress, progress_ctx, err);
        ls.c->n_samples = ls.n_names; /* the rest are parsed or zeroed: both free cleanly */
    }
    if (st == ARRANK_OK)
        st = check_ids(&ls, err);
    if (st == ARRANK_OK)
        st = finish_samples(&ls, err);
    if (st == ARRANK_OK)
        st = merge_and_compact(&ls, err);
    load_free(&ls);
    if (st != ARRANK_OK) {
        arrank_campaign_free(ls.c);
        return st;
    }
    *out = ls.c;
    return ARRANK_OK;
}

/* The public entry: the work in the C locale, rounding to nearest, whatever the
   host program set (number.h), and then the host's settings back. */
arrank_status arrank_campaign_load_progress(const char *dir, arrank_units *units,
                                            arrank_progress_fn progress, void *progress_ctx,
                                            arrank_campaign **out, arrank_error *err)
{
    arrank_numbers_env env;
    arrank_numbers_c_enter(&env);
    arrank_status st = campaign_load_progress_in_c(dir, units, progress, progress_ctx, out, err);
    arrank_numbers_c_leave(&env);
    return st;
}

arrank_status arrank_campaign_parse_ini(const char *name, const char *data, size_t len,
                                        arrank_units *units, arrank_campaign **out,
                                        arrank_error *err)
{
    if (out)
        *out = NULL;
    if (!name || (!data && len) || !units || !out)
        return arrank_errorf(err, ARRANK_EINVAL, "missing argument to arrank_campaign_parse_ini");
    arrank_campaign *c = calloc(1, sizeof *c);
    if (!c)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    c->operating_temp_K = NAN;
    c->confidence = NAN;
    c->max_temp_K = NAN;
    arrank_ini ini;
    size_t notes_cap = 0;
    arrank_status st = arrank_ini_parse(name, data ? data : "", len, units, &ini, err);
    if (st == ARRANK_OK)
        take_ini(&ini, c, &notes_cap);
    /* With no samples, every [sample ID] section becomes a "matches no sample" note. */
    if (st == ARRANK_OK && ini.n_entries)
        st = apply_ini_entries(&ini, c, &notes_cap, NULL, 0, name, err);
    if (st == ARRANK_OK) {
        c->path = strdup(name);
        c->name = strdup(arrank_base_name(name));
        if (!c->title)
            c->title = strdup(c->name ? c->name : "");
        if (!c->path || !c->name || !c->title)
            st = arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    arrank_ini_free(&ini);
    if (st != ARRANK_OK) {
        arrank_campaign_free(c);
        return st;
    }
    *out = c;
    return ARRANK_OK;
}
