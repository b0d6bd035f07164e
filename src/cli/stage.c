/*
 * stage.c - every output of one run is written all or nothing, never over an
 * input, never to a name another user could guess (cli.h, "Outputs").
 *
 * Each output file is written to a temporary file made with mkstemp, and each
 * output folder (figures, report) to a private folder made with mkdtemp, both
 * in the nearest folder that already exists on the way to the destination, so
 * that the final rename stays on one file system.  Only when every output of
 * the run has been written does cli_stage_commit create the missing folders
 * and rename everything into place; any failure before that removes every
 * temporary, and no folder is created.  SIGINT, SIGTERM and SIGHUP remove the
 * temporaries (the handler only unlinks paths prepared beforehand, with
 * async-signal-safe calls) and then end the program with the same signal.
 *
 * Before anything is staged, each destination is resolved (realpath of its
 * folder, then the device and inode of the file where it exists) and refused
 * when it is a sample file, campaign.ini, or lies inside the campaign folder.
 */
#define _GNU_SOURCE /* getdents64 through syscall; O_DIRECTORY */
#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <limits.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/syscall.h>
#include <unistd.h>

#include "cli.h"

#define STAGE_MAX 64

typedef struct {
    char final[PATH_MAX]; /* the destination as given */
    char temp[PATH_MAX];  /* the temporary file or private folder */
    int is_dir;
    int is_device;        /* destination is a device or pipe: copied, not renamed */
    FILE *f;              /* open stream of a staged file; NULL after closing */
} stage_item;

/* One set per process: the signal handler must reach it without arguments. */
static struct {
    char campaign_real[PATH_MAX]; /* realpath of the campaign folder, "" if none */
    char also_real[CLI_MAX_CAMPAIGNS][PATH_MAX]; /* the other campaigns of the run */
    size_t n_also;
    const arrank_campaign *campaign;
    stage_item item[STAGE_MAX];
    volatile sig_atomic_t n;      /* items whose temp exists */
    int handlers;
} stage;

/* ---- removal, async-signal-safe ------------------------------------------- */

/* Remove what lies inside the folder fd (two levels: the report writer's own
   private folder sits inside ours), then nothing else.  Only getdents64,
   unlinkat, openat and close: all plain system calls. */
static void clear_folder(int fd, int depth)
{
    char buf[4096];
    for (;;) {
        long got = syscall(SYS_getdents64, fd, buf, sizeof buf);
        if (got <= 0)
            return;
        int removed = 0;
        for (long off = 0; off < got;) {
            struct {
                unsigned long long ino;
                long long off;
                unsigned short reclen;
                unsigned char type;
                char name[];
            } *d = (void *)(buf + off);
            off += d->reclen;
            if (d->name[0] == '.' && (d->name[1] == '\0' ||
                                      (d->name[1] == '.' && d->name[2] == '\0')))
                continue;
            if (unlinkat(fd, d->name, 0) == 0) {
                removed = 1;
                continue;
            }
            if (depth > 0) {
                int sub = openat(fd, d->name, O_RDONLY | O_DIRECTORY | O_NOFOLLOW);
                if (sub >= 0) {
                    clear_folder(sub, depth - 1);
                    close(sub);
                }
                if (unlinkat(fd, d->name, AT_REMOVEDIR) == 0)
                    removed = 1;
            }
        }
        if (removed) /* entries moved under us: read the folder again */
            lseek(fd, 0, SEEK_SET);
    }
}

static void remove_item(const stage_item *it)
{
    if (!it->is_dir) {
        unlink(it->temp);
        return;
    }
    int fd = open(it->temp, O_RDONLY | O_DIRECTORY | O_NOFOLLOW);
    if (fd >= 0) {
        clear_folder(fd, 2);
        close(fd);
    }
    rmdir(it->temp);
}

static void on_signal(int sig)
{
    for (sig_atomic_t k = 0; k < stage.n; k++)
        remove_item(&stage.item[k]);
    stage.n = 0;
    signal(sig, SIG_DFL);
    raise(sig);
}

static void install_handlers(void)
{
    if (stage.handlers)
        return;
    stage.handlers = 1;
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_signal;
    sigfillset(&sa.sa_mask);
    const int sigs[] = {SIGINT, SIGTERM, SIGHUP};
    for (size_t i = 0; i < sizeof sigs / sizeof sigs[0]; i++) {
        struct sigaction old;
        /* keep an ignored signal ignored (nohup) */
        if (sigaction(sigs[i], NULL, &old) == 0 && old.sa_handler == SIG_IGN)
            continue;
        sigaction(sigs[i], &sa, NULL);
    }
}

/* ---- paths ----------------------------------------------------------------- */

/* Split path into its folder part (as written; "." when there is none) and
   its last name. */
static void split_path(const char *path, char *dir, const char **name)
{
    const char *slash = strrchr(path, '/');
    if (!slash) {
        strcpy(dir, ".");
        *name = path;
    } else if (slash == path) {
        strcpy(dir, "/");
        *name = slash + 1;
    } else {
        memcpy(dir, path, (size_t)(slash - path));
        dir[slash - path] = '\0';
        *name = slash + 1;
    }
}

/* The nearest folder that exists on the way to dir (dir itself when it
   exists), written into near. */
static void nearest_existing(const char *dir, char *near)
{
    snprintf(near, PATH_MAX, "%s", dir);
    for (;;) {
        struct stat st;
        if (stat(near, &st) == 0 && S_ISDIR(st.st_mode))
            return;
        char *slash = strrchr(near, '/');
        if (!slash) {
            strcpy(near, ".");
            return;
        }
        if (slash == near) {
            strcpy(near, "/");
            return;
        }
        *slash = '\0';
    }
}

/* 1 when the resolved path `real` is `inside` or lies below it. */
static int is_within(const char *real, const char *inside)
{
    size_t n = strlen(inside);
    if (n == 1 && inside[0] == '/')
        return 1;
    return strncmp(real, inside, n) == 0 && (real[n] == '\0' || real[n] == '/');
}

/* 1 when the file out is the same file as an input of the campaign: the
   device and inode the reader saw for each sample file (no system call per
   sample, however many there are). */
static int same_as_input(const struct stat *out)
{
    const arrank_campaign *c = stage.campaign;
    for (size_t i = 0; c && i < c->n_samples; i++)
        if (c->samples[i].file_ino != 0 &&
            c->samples[i].file_dev == (unsigned long long)out->st_dev &&
            c->samples[i].file_ino == (unsigned long long)out->st_ino)
            return 1;
    return 0;
}

/*
 * Refuse a destination that is an input or inside the campaign folder
 * (EXIT_USAGE, printed); -1 when it may be written.  The folder is resolved
 * as far as it exists, so "C//./x.json", "../C/x.json" and a link to C are
 * all seen as C.
 */
static int guard(const char *path, int is_dir)
{
    char dir[PATH_MAX], near[PATH_MAX], real[PATH_MAX];
    const char *name;
    if (strlen(path) >= PATH_MAX - 1) {
        cli_fail("%s: output path too long", path);
        return EXIT_USAGE;
    }
    if (is_dir) {
        snprintf(dir, sizeof dir, "%s", path);
        name = "";
    } else {
        split_path(path, dir, &name);
    }
    nearest_existing(dir, near);
    if (!realpath(near, real)) {
        cli_fail("%s: cannot resolve the folder '%s': %s", path, near, strerror(errno));
        return EXIT_IO;
    }
    if (stage.campaign_real[0] && is_within(real, stage.campaign_real)) {
        cli_fail("%s: refusing to write inside the campaign folder '%s' (its inputs are "
                 "never written); choose another place",
                 path, stage.campaign->path);
        return EXIT_USAGE;
    }
    for (size_t k = 0; k < stage.n_also; k++)
        if (is_within(real, stage.also_real[k])) {
            cli_fail("%s: refusing to write inside the campaign folder '%s' (its inputs are "
                     "never written); choose another place",
                     path, stage.also_real[k]);
            return EXIT_USAGE;
        }
    struct stat st;
    if (!is_dir && stat(path, &st) == 0 && same_as_input(&st)) {
        cli_fail("%s: refusing to overwrite an input file of the campaign", path);
        return EXIT_USAGE;
    }
    return -1;
}

/* ---- the set ---------------------------------------------------------------- */

void cli_stage_begin(const arrank_campaign *campaign)
{
    stage.campaign = campaign;
    stage.campaign_real[0] = '\0';
    if (campaign && campaign->path && !realpath(campaign->path, stage.campaign_real))
        stage.campaign_real[0] = '\0';
}

void cli_stage_guard_also(const char *dir)
{
    if (stage.n_also < CLI_MAX_CAMPAIGNS && realpath(dir, stage.also_real[stage.n_also]))
        stage.n_also++;
}

int cli_stage_check(const char *path, int is_dir)
{
    return guard(path, is_dir);
}

/* The process's umask, for the mode a plain fopen would have given. */
static mode_t current_umask(void)
{
    mode_t m = umask(0);
    umask(m);
    return m;
}

/* Room for one more item, with its temp path in a folder near final. */
static stage_item *new_item(const char *final, int is_dir, int *rc)
{
    if (stage.n >= STAGE_MAX) {
        cli_fail("%s: too many outputs in one run", final);
        *rc = EXIT_USAGE;
        return NULL;
    }
    *rc = guard(final, is_dir);
    if (*rc != -1)
        return NULL;
    stage_item *it = &stage.item[stage.n];
    memset(it, 0, sizeof *it);
    snprintf(it->final, sizeof it->final, "%s", final);
    it->is_dir = is_dir;
    char dir[PATH_MAX], near[PATH_MAX];
    const char *name;
    if (is_dir)
        snprintf(dir, sizeof dir, "%s", final);
    else
        split_path(final, dir, &name);
    nearest_existing(dir, near);
    struct stat st;
    if (!is_dir && stat(final, &st) == 0 && !S_ISREG(st.st_mode) && !S_ISDIR(st.st_mode)) {
        /* a device or a pipe (/dev/stdout, a FIFO): the content waits in
           the temporary folder and is copied into it at commit */
        it->is_device = 1;
        const char *t = getenv("TMPDIR");
        snprintf(near, sizeof near, "%s", t && *t ? t : "/tmp");
    }
    if (snprintf(it->temp, sizeof it->temp, "%s/.arrank-XXXXXX", near) >=
        (int)sizeof it->temp) {
        cli_fail("%s: output path too long", final);
        *rc = EXIT_USAGE;
        return NULL;
    }
    install_handlers();
    return it;
}

FILE *cli_stage_file(const char *path, int *rc)
{
    stage_item *it = new_item(path, 0, rc);
    if (!it)
        return NULL;
    int fd = mkstemp(it->temp);
    if (fd < 0) {
        cli_fail("%s: cannot create a temporary file beside it: %s", path, strerror(errno));
        *rc = EXIT_IO;
        return NULL;
    }
    stage.n++; /* from here on the handler removes it */
    fchmod(fd, 0666 & ~current_umask());
    it->f = fdopen(fd, "w");
    if (!it->f) {
        cli_fail("%s: %s", path, strerror(errno));
        close(fd);
        *rc = EXIT_IO;
        return NULL;
    }
    *rc = -1;
    return it->f;
}

const char *cli_stage_dir(const char *dir, int *rc)
{
    stage_item *it = new_item(dir, 1, rc);
    if (!it)
        return NULL;
    if (!mkdtemp(it->temp)) {
        cli_fail("%s: cannot create a private folder beside it: %s", dir, strerror(errno));
        *rc = EXIT_IO;
        return NULL;
    }
    stage.n++;
    *rc = -1;
    return it->temp;
}

/* mkdir -p of dir; -1 or an exit status (printed). */
static int make_folders(const char *dir)
{
    char p[PATH_MAX];
    snprintf(p, sizeof p, "%s", dir);
    for (char *s = p + 1;; s++) {
        if (*s != '/' && *s != '\0')
            continue;
        char c = *s;
        *s = '\0';
        struct stat st;
        if (mkdir(p, 0777) != 0 && errno != EEXIST) {
            cli_fail("%s: cannot make the folder: %s", p, strerror(errno));
            return EXIT_IO;
        }
        if (stat(p, &st) != 0 || !S_ISDIR(st.st_mode)) {
            cli_fail("%s: is not a folder", p);
            return EXIT_IO;
        }
        *s = c;
        if (c == '\0')
            return -1;
    }
}

/* 1 for an entry of a private folder that belongs in the destination: not
   . or .., not a writer's own hidden temporary (".arrank-*", ".*.tmp"). */
static int moved_name(const char *name)
{
    if (name[0] != '.')
        return 1;
    size_t n = strlen(name);
    return strcmp(name, CLI_CAMPAIGN_MARK) == 0 ||
           !(n <= 2 || strncmp(name, ".arrank-", 8) == 0 ||
             (n > 4 && strcmp(name + n - 4, ".tmp") == 0));
}

/* 0 when dest may be replaced by a rename (absent, or a plain file); else
   prints why and returns EXIT_IO. */
static int replaceable(const char *dest)
{
    struct stat st;
    if (lstat(dest, &st) != 0 || S_ISREG(st.st_mode))
        return 0;
    cli_fail("%s: exists and is not a plain file; nothing was written", dest);
    return EXIT_IO;
}

/* Before any rename: every destination can take its file, so that a run
   does not stop half-way through moving its outputs into place. */
static int preflight(void)
{
    char to[PATH_MAX];
    for (sig_atomic_t k = 0; k < stage.n; k++) {
        const stage_item *it = &stage.item[k];
        if (it->is_device)
            continue;
        if (!it->is_dir) {
            if (replaceable(it->final))
                return EXIT_IO;
            continue;
        }
        struct stat st;
        if (lstat(it->final, &st) == 0 && !S_ISDIR(st.st_mode)) {
            cli_fail("%s: exists and is not a folder; nothing was written", it->final);
            return EXIT_IO;
        }
        DIR *d = opendir(it->temp);
        struct dirent *e;
        while (d && (e = readdir(d))) {
            if (!moved_name(e->d_name))
                continue;
            snprintf(to, sizeof to, "%s/%s", it->final, e->d_name);
            if (replaceable(to)) {
                closedir(d);
                return EXIT_IO;
            }
        }
        if (d)
            closedir(d);
    }
    return -1;
}

/* Copy the staged content of it->temp into the device or pipe it->final. */
static int copy_to_device(const stage_item *it)
{
    FILE *in = fopen(it->temp, "r");
    FILE *out = in ? fopen(it->final, "w") : NULL;
    char buf[65536];
    size_t n;
    int e = in && out ? 0 : errno;
    while (!e && (n = fread(buf, 1, sizeof buf, in)) > 0)
        if (fwrite(buf, 1, n, out) != n)
            e = errno ? errno : EIO;
    if (!e && in && ferror(in))
        e = EIO;
    if (out && fclose(out) != 0 && !e)
        e = errno ? errno : EIO;
    if (in)
        fclose(in);
    if (e) {
        cli_fail("%s: cannot write: %s", it->final, strerror(e));
        return EXIT_IO;
    }
    return -1;
}

/* Move every entry of the private folder it->temp into it->final. */
static int move_folder(const stage_item *it)
{
    int rc = make_folders(it->final);
    if (rc != -1)
        return rc;
    DIR *d = opendir(it->temp);
    if (!d) {
        cli_fail("%s: %s", it->temp, strerror(errno));
        return EXIT_IO;
    }
    struct dirent *e;
    char from[PATH_MAX], to[PATH_MAX];
    while ((e = readdir(d))) {
        if (!moved_name(e->d_name))
            continue; /* ., .., and the writers' own hidden temporaries */
        snprintf(from, sizeof from, "%s/%s", it->temp, e->d_name);
        snprintf(to, sizeof to, "%s/%s", it->final, e->d_name);
        if (rename(from, to) != 0) {
            cli_fail("%s: cannot move into place: %s", to, strerror(errno));
            closedir(d);
            return EXIT_IO;
        }
    }
    closedir(d);
    return -1;
}

/*
 * A staged file written to its end: its pages start on their way to the
 * disk now (sync_file_range, Linux), while the run writes its next output,
 * so that the fsync of cli_stage_commit finds little left to wait for.  Only
 * a head start: the commit's fsync is what makes the file safe.
 */
void cli_stage_written(FILE *f)
{
#ifdef SYNC_FILE_RANGE_WRITE
    if (fflush(f) == 0)
        (void)sync_file_range(fileno(f), 0, 0, SYNC_FILE_RANGE_WRITE);
#else
    (void)f;
#endif
}

int cli_stage_commit(void)
{
    /* 1. close every file, checking that all of it reached the disk */
    for (sig_atomic_t k = 0; k < stage.n; k++) {
        stage_item *it = &stage.item[k];
        if (!it->f)
            continue;
        int bad = fflush(it->f) != 0 || ferror(it->f) || fsync(fileno(it->f)) != 0;
        int e = errno;
        bad |= fclose(it->f) != 0;
        it->f = NULL;
        if (bad) {
            cli_fail("%s: cannot write: %s", it->final, strerror(e ? e : EIO));
            cli_stage_abort();
            return EXIT_IO;
        }
    }
    /* 2. every destination can take its file; devices and pipes first (they
       can fail, /dev/full does); then folders and renames */
    int rc = preflight();
    for (sig_atomic_t k = 0; k < stage.n && rc == -1; k++)
        if (stage.item[k].is_device)
            rc = copy_to_device(&stage.item[k]);
    for (sig_atomic_t k = 0; k < stage.n && rc == -1; k++) {
        const stage_item *it = &stage.item[k];
        if (it->is_device)
            continue;
        if (it->is_dir) {
            rc = move_folder(it);
            continue;
        }
        char dir[PATH_MAX];
        const char *name;
        split_path(it->final, dir, &name);
        rc = make_folders(dir);
        if (rc == -1 && rename(it->temp, it->final) != 0) {
            cli_fail("%s: cannot move into place: %s", it->final, strerror(errno));
            rc = EXIT_IO;
        }
    }
    cli_stage_abort(); /* what is left: emptied private folders, or everything on failure */
    return rc;
}

void cli_stage_abort(void)
{
    sigset_t all, old;
    sigfillset(&all);
    sigprocmask(SIG_BLOCK, &all, &old);
    for (sig_atomic_t k = 0; k < stage.n; k++) {
        stage_item *it = &stage.item[k];
        if (it->f) {
            fclose(it->f);
            it->f = NULL;
        }
        remove_item(it);
    }
    stage.n = 0;
    sigprocmask(SIG_SETMASK, &old, NULL);
}

/* ---- whose folder ---------------------------------------------------------- */

int cli_stage_claim(const char *dir, const char *priv, int is_default)
{
    const char *mine = stage.campaign_real[0] ? stage.campaign_real : NULL;
    if (!mine || !is_default) /* a folder named with --out is the user's choice */
        return -1;
    char path[PATH_MAX], theirs[PATH_MAX];
    snprintf(path, sizeof path, "%s/%s", dir, CLI_CAMPAIGN_MARK);
    FILE *f = fopen(path, "r");
    if (f) {
        size_t n = fread(theirs, 1, sizeof theirs - 1, f);
        fclose(f);
        theirs[n] = '\0';
        theirs[strcspn(theirs, "\n")] = '\0';
        if (theirs[0] && strcmp(theirs, mine) != 0) {
            cli_fail("%s holds the outputs of the campaign '%s', not of '%s'; give --out to "
                     "write this one elsewhere",
                     dir, theirs, mine);
            return EXIT_USAGE;
        }
    }
    snprintf(path, sizeof path, "%s/%s", priv, CLI_CAMPAIGN_MARK);
    f = fopen(path, "w");
    if (!f || fprintf(f, "%s\n", mine) < 0 || fclose(f) != 0) {
        cli_fail("%s: cannot write: %s", path, strerror(errno));
        return EXIT_IO;
    }
    return -1;
}
