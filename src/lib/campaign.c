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

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
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
                               size_t *cap, size_t *len, arrank_error *err)
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
    arrank_list_free(campaign->notes, campaign->n_notes);
    free(campaign);
}

/* Sorted list of the *.csv names in dir (hidden files skipped). */
static arrank_status list_folder(const char *dir, char ***names, size_t *n, int *has_ini,
                                 arrank_error *err)
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

static char *join_path(const char *dir, const char *name)
{
    size_t nd = strlen(dir), nn = strlen(name);
    int slash = nd > 0 && dir[nd - 1] != '/';
    char *p = malloc(nd + (size_t)slash + nn + 1);
    if (!p)
        return NULL;
    memcpy(p, dir, nd);
    if (slash)
        p[nd] = '/';
    memcpy(p + nd + (size_t)slash, name, nn + 1);
    return p;
}


/* Read campaign.ini of the folder into *ini. */
static arrank_status read_ini(const char *dir, int dirfd, arrank_units *units, arrank_ini *ini,
                              char **buf, size_t *cap, arrank_error *err)
{
    char *path = join_path(dir, "campaign.ini");
    if (!path)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    size_t len = 0;
    arrank_status s = read_file(dirfd, "campaign.ini", path, buf, cap, &len, err);
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
    c->rate_unit = ini->rate_unit;
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
        if (arrank_sample_add_meta(index[lo], e->key, e->value, ini_path, e->line) != 0)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
    }
    return ARRANK_OK;
}

/* Read and parse one file of the folder into *sample. */
static arrank_status load_one(const char *dir, int dirfd, const char *name, arrank_units *units,
                              const char *report_unit, arrank_sample *sample, char **buf,
                              size_t *cap, arrank_error *err)
{
    char *path = join_path(dir, name);
    if (!path)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    size_t len = 0;
    arrank_status st = read_file(dirfd, name, path, buf, cap, &len, err);
    if (st == ARRANK_OK)
        st = arrank_sample_parse_deferred(path, *buf, len, units, report_unit, sample, err);
    free(path);
    return st;
}

/*
 * Files 1..n-1 on the workers (arrank_workers_each, util.c), each worker with
 * its own read buffer.  A sample depends only on its file and the report
 * unit, so the result is the same for any number of workers, and the error
 * is the first failing file's in name order.
 */
#define LOAD_CHUNK 16
#define LOAD_MIN_PER_WORKER 64
#define LOAD_MAX_WORKERS 8

typedef struct {
    const char *dir;
    int dirfd;
    char **names;
    arrank_units *units;
    arrank_campaign *c;
    char *buf[LOAD_MAX_WORKERS];
    size_t cap[LOAD_MAX_WORKERS];
} load_job;

static arrank_status load_item(void *ctx, size_t i, size_t w, arrank_error *err)
{
    load_job *j = ctx;
    return load_one(j->dir, j->dirfd, j->names[i], j->units, j->c->rate_unit, &j->c->samples[i],
                    &j->buf[w], &j->cap[w], err);
}

static arrank_status load_rest(const char *dir, int dirfd, char **names, size_t n,
                               arrank_units *units, arrank_campaign *c,
                               arrank_progress_fn progress, void *progress_ctx,
                               arrank_error *err)
{
    load_job j;
    memset(&j, 0, sizeof j);
    j.dir = dir;
    j.dirfd = dirfd;
    j.names = names;
    j.units = units;
    j.c = c;
    size_t workers = n > 1 ? arrank_workers_for(n - 1, LOAD_MIN_PER_WORKER) : 1;
    if (workers > LOAD_MAX_WORKERS)
        workers = LOAD_MAX_WORKERS;
    arrank_status st = arrank_workers_each(1, n, LOAD_CHUNK, workers, load_item, &j, progress,
                                           progress_ctx, "reading samples", err);
    for (size_t w = 0; w < LOAD_MAX_WORKERS; w++)
        free(j.buf[w]);
    return st;
}

/* What a load holds while it runs; load_free releases all but the campaign. */
typedef struct {
    const char *dir;
    arrank_units *units;
    char **names;
    size_t n_names;
    int has_ini;
    int dirfd;
    arrank_ini ini;
    size_t notes_cap; /* room of c->notes */
    char *buf;        /* the read buffer of the calling thread */
    size_t cap;
    arrank_sample **index; /* the samples sorted by id */
    arrank_campaign *c;
} load_state;

static void load_free(load_state *ls)
{
    free(ls->index);
    free(ls->buf);
    arrank_ini_free(&ls->ini);
    arrank_list_free(ls->names, ls->n_names);
    if (ls->dirfd >= 0)
        close(ls->dirfd);
}

/* Load step 1: the folder listed, the unit database ready, the folder open. */
static arrank_status open_folder(load_state *ls, arrank_error *err)
{
    arrank_status st = list_folder(ls->dir, &ls->names, &ls->n_names, &ls->has_ini, err);
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
    return ARRANK_OK;
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
    return ARRANK_OK;
}

/* Load step 3: the first sample (in name order), which sets the report unit
   the others are converted to unless campaign.ini has. */
static arrank_status read_first(load_state *ls, arrank_error *err)
{
    arrank_campaign *c = ls->c;
    c->samples = calloc(ls->n_names, sizeof *c->samples);
    if (!c->samples)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    arrank_status st = load_one(ls->dir, ls->dirfd, ls->names[0], ls->units, c->rate_unit,
                                &c->samples[0], &ls->buf, &ls->cap, err);
    if (st != ARRANK_OK)
        return st;
    c->n_samples = 1;
    if (c->rate_unit) /* campaign.ini has set it */
        return ARRANK_OK;
    char spelled[UNIT_MAX];
    const char *u = c->samples[0].rate_unit_file;
    if (arrank_units_spelling(u, spelled, sizeof spelled) != 0)
        snprintf(spelled, sizeof spelled, "%s", u);
    if (!(c->rate_unit = strdup(spelled)))
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    c->basis = c->samples[0].basis;
    return ARRANK_OK;
}

/* Load step 5: sample ids must be unique; sort an index rather than compare
   all pairs (the index, by id, then finds campaign.ini's sections). */
static arrank_status check_ids(load_state *ls, arrank_error *err)
{
    arrank_campaign *c = ls->c;
    arrank_sample **index = ls->index = malloc(c->n_samples * sizeof *index);
    if (!index)
        return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
    for (size_t i = 0; i < c->n_samples; i++)
        index[i] = &c->samples[i];
    qsort(index, c->n_samples, sizeof *index, compare_sample_ids);
    for (size_t i = 1; i < c->n_samples; i++) {
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

/* Load step 6: campaign.ini's [sample ID] keys, then the rates derived from
   conversion, which need every metadata entry, campaign.ini's included. */
static arrank_status finish_samples(load_state *ls, arrank_error *err)
{
    arrank_campaign *c = ls->c;
    if (ls->ini.n_entries) {
        char *ini_path = join_path(ls->dir, "campaign.ini");
        if (!ini_path)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory loading the campaign");
        arrank_status st = apply_ini_entries(&ls->ini, c, &ls->notes_cap, ls->index,
                                             c->n_samples, ini_path, err);
        free(ini_path);
        if (st != ARRANK_OK)
            return st;
    }
    for (size_t i = 0; i < c->n_samples; i++) {
        if (!c->samples[i].rates_derived)
            continue;
        arrank_status st = arrank_sample_derive_rates(&c->samples[i], ls->units, c->rate_unit, err);
        if (st != ARRANK_OK)
            return st;
    }
    return ARRANK_OK;
}

arrank_status arrank_campaign_load(const char *dir, arrank_units *units, arrank_campaign **out,
                                   arrank_error *err)
{
    return arrank_campaign_load_progress(dir, units, NULL, NULL, out, err);
}

arrank_status arrank_campaign_load_progress(const char *dir, arrank_units *units,
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
    arrank_status st = open_folder(&ls, err);
    if (st == ARRANK_OK)
        st = new_campaign(&ls, err);
    if (st == ARRANK_OK)
        st = read_first(&ls, err);
    if (st == ARRANK_OK) {
        /* Load step 4: the rest, on the workers. */
        if (progress)
            progress(progress_ctx, "reading samples", 1, ls.n_names);
        st = load_rest(dir, ls.dirfd, ls.names, ls.n_names, units, ls.c, progress, progress_ctx,
                       err);
        ls.c->n_samples = ls.n_names; /* the rest are parsed or zeroed: both free cleanly */
    }
    if (st == ARRANK_OK)
        st = check_ids(&ls, err);
    if (st == ARRANK_OK)
        st = finish_samples(&ls, err);
    load_free(&ls);
    if (st != ARRANK_OK) {
        arrank_campaign_free(ls.c);
        return st;
    }
    *out = ls.c;
    return ARRANK_OK;
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
