/*
 * plot_gnuplot.c - finding gnuplot and running it on a script fed through a
 * pipe, in the output folder, with its messages kept for the error (the plot
 * family).
 */
/* realpath is an XSI function. */
#define _XOPEN_SOURCE 700

#include <errno.h>
#include <fcntl.h>
#include <limits.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "plot_internal.h"

/* ---- running gnuplot ---------------------------------------------------- */

static int is_executable_file(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0 && S_ISREG(st.st_mode) && access(path, X_OK) == 0;
}

static arrank_status not_found(arrank_error *err, const char *program, int from_env)
{
    if (from_env)
        return arrank_errorf(err, ARRANK_ENOGNUPLOT,
                             "gnuplot program '%s' (from ARRANK_GNUPLOT) not found; " INSTALL_HINT,
                             program);
    if (strchr(program, '/') || strcmp(program, "gnuplot") != 0)
        return arrank_errorf(err, ARRANK_ENOGNUPLOT,
                             "gnuplot program '%s' not found; " INSTALL_HINT, program);
    return arrank_errorf(err, ARRANK_ENOGNUPLOT,
                         "'gnuplot' not found on PATH; the figures need it: " INSTALL_HINT);
}

arrank_status arrank_plot_find_gnuplot(const char *program, char **path, arrank_error *err)
{
    *path = NULL;
    int from_env = 0;
    if (!program) {
        const char *env = getenv("ARRANK_GNUPLOT");
        if (env && *env) {
            program = env;
            from_env = 1;
        } else
            program = "gnuplot";
    }
    if (strchr(program, '/')) {
        if (!is_executable_file(program))
            return not_found(err, program, from_env);
        char *real = realpath(program, NULL);
        if (!real)
            return not_found(err, program, from_env);
        *path = real;
        return ARRANK_OK;
    }
    const char *env_path = getenv("PATH");
    if (!env_path || !*env_path)
        env_path = "/usr/bin:/bin";
    const char *p = env_path;
    while (1) {
        const char *colon = strchr(p, ':');
        size_t dlen = colon ? (size_t)(colon - p) : strlen(p);
        size_t n = dlen + strlen(program) + 2;
        char *cand = malloc(n);
        if (!cand)
            return arrank_errorf(err, ARRANK_ENOMEM, "out of memory");
        /* An empty PATH entry means the current folder (POSIX XBD 8.3). */
        if (dlen == 0)
            snprintf(cand, n, "./%s", program);
        else
            snprintf(cand, n, "%.*s/%s", (int)dlen, p, program);
        if (is_executable_file(cand)) {
            char *real = realpath(cand, NULL);
            free(cand);
            if (!real)
                return not_found(err, program, from_env);
            *path = real;
            return ARRANK_OK;
        }
        free(cand);
        if (!colon)
            break;
        p = colon + 1;
    }
    return not_found(err, program, from_env);
}

/* Write all of buf to fd; EPIPE when the reader is gone.  The caller has
   SIGPIPE blocked. */
static int write_all(int fd, const char *buf, size_t len)
{
    while (len > 0) {
        ssize_t w = write(fd, buf, len);
        if (w < 0) {
            if (errno == EINTR)
                continue;
            return errno;
        }
        buf += w;
        len -= (size_t)w;
    }
    return 0;
}

/* One reading of gnuplot's stderr: the figure of the first message line
   (from our "arrank-figure:" markers) and the message lines joined with "; ".
   With skip_warnings, gnuplot's warnings are left out, so that the error
   that stopped it is the one named.  Echoed command lines ("gnuplot> ...")
   and caret lines are always left out.  Returns whether any line was found. */
static int gnuplot_lines(FILE *log, int skip_warnings, char *figure_name, size_t fn,
                         char *text, size_t tn)
{
    char line[1024];
    size_t len = 0;
    int found = 0;
    figure_name[0] = text[0] = '\0';
    rewind(log);
    while (fgets(line, sizeof line, log)) {
        line[strcspn(line, "\r\n")] = '\0';
        for (char *c = line; *c; c++)
            if ((unsigned char)*c < 0x20 || *c == 0x7f)
                *c = ' ';
        char *l = line;
        while (*l == ' ')
            l++;
        if (!*l || *l == '^' || strncmp(l, "gnuplot>", 8) == 0)
            continue;
        if (strncmp(l, "arrank-figure: ", 15) == 0) {
            if (!found) {
                size_t m = strlen(l + 15) < fn - 1 ? strlen(l + 15) : fn - 1;
                memcpy(figure_name, l + 15, m);
                figure_name[m] = '\0';
            }
            continue;
        }
        if (skip_warnings && (strstr(l, "warning:") || strstr(l, "Warning") ||
                              strncmp(l, "Check plot boundary", 19) == 0))
            continue;
        found = 1;
        size_t need = (len ? 2 : 0) + strlen(l);
        if (len + need >= tn)
            break;
        if (len) {
            memcpy(text + len, "; ", 2);
            len += 2;
        }
        memcpy(text + len, l, strlen(l) + 1);
        len += strlen(l);
    }
    return found;
}

/* gnuplot's stderr as one line: the figure it failed on and its error lines;
   its warnings only when there is nothing else. */
static void gnuplot_message(FILE *log, char *msg, size_t n)
{
    char figure_name[160], text[ARRANK_ERROR_MSG_MAX - 200]; /* room for the figure name */
    if (!gnuplot_lines(log, 1, figure_name, sizeof figure_name, text, sizeof text) &&
        !gnuplot_lines(log, 0, figure_name, sizeof figure_name, text, sizeof text))
        snprintf(text, sizeof text, "no message on its error output");
    if (figure_name[0])
        snprintf(msg, n, "gnuplot failed on '%s': %s", figure_name, text);
    else
        snprintf(msg, n, "gnuplot failed: %s", text);
}

/* Run program in folder dir with script on its standard input.  OK when it
   exits with status 0. */
arrank_status arrank_plot_run_gnuplot(const char *program, const char *dir, const char *script_text,
                                 size_t script_len, arrank_error *err)
{
    FILE *log = tmpfile();
    if (!log)
        return arrank_errorf(err, ARRANK_EIO, "cannot make a temporary file for gnuplot: %s",
                             strerror(errno));
    int in[2], st_pipe[2];
    if (pipe(in) != 0) {
        fclose(log);
        return arrank_errorf(err, ARRANK_EIO, "cannot make a pipe: %s", strerror(errno));
    }
    if (pipe(st_pipe) != 0) {
        close(in[0]);
        close(in[1]);
        fclose(log);
        return arrank_errorf(err, ARRANK_EIO, "cannot make a pipe: %s", strerror(errno));
    }
    /* The status pipe closes on exec; if exec fails the child sends errno. */
    fcntl(st_pipe[1], F_SETFD, FD_CLOEXEC);
    fcntl(in[1], F_SETFD, FD_CLOEXEC);
    fflush(NULL);
    pid_t pid = fork();
    if (pid < 0) {
        int e = errno;
        close(in[0]);
        close(in[1]);
        close(st_pipe[0]);
        close(st_pipe[1]);
        fclose(log);
        return arrank_errorf(err, ARRANK_EIO, "cannot start gnuplot: %s", strerror(e));
    }
    if (pid == 0) {
        /* Child: only async-signal-safe calls from here to exec. */
        int lf = fileno(log);
        close(st_pipe[0]);
        if (dup2(in[0], 0) < 0 || dup2(lf, 1) < 0 || dup2(lf, 2) < 0)
            goto child_fail;
        close(in[0]);
        if (chdir(dir) != 0)
            goto child_fail;
        execl(program, program, (char *)NULL);
    child_fail:;
        int e = errno;
        ssize_t ignored = write(st_pipe[1], &e, sizeof e);
        (void)ignored;
        _exit(127);
    }
    close(in[0]);
    close(st_pipe[1]);

    /* A gnuplot that dies early must not kill us with SIGPIPE: block it while
       writing, then take any pending one before restoring the mask. */
    sigset_t block, old;
    sigemptyset(&block);
    sigaddset(&block, SIGPIPE);
    sigprocmask(SIG_BLOCK, &block, &old);
    int werr = write_all(in[1], script_text, script_len);
    close(in[1]);
    sigset_t pending;
    sigpending(&pending);
    if (sigismember(&pending, SIGPIPE) && !sigismember(&old, SIGPIPE)) {
        struct timespec zero = {0, 0};
        sigtimedwait(&block, NULL, &zero);
    }
    sigprocmask(SIG_SETMASK, &old, NULL);

    int child_errno = 0;
    ssize_t got;
    do
        got = read(st_pipe[0], &child_errno, sizeof child_errno);
    while (got < 0 && errno == EINTR);
    close(st_pipe[0]);
    int status = 0;
    while (waitpid(pid, &status, 0) < 0)
        if (errno != EINTR) {
            fclose(log);
            return arrank_errorf(err, ARRANK_EPLOT, "cannot wait for gnuplot: %s",
                                 strerror(errno));
        }

    arrank_status st = ARRANK_OK;
    if (got == (ssize_t)sizeof child_errno) {
        if (child_errno == ENOENT || child_errno == EACCES || child_errno == ENOEXEC)
            st = arrank_errorf(err, ARRANK_ENOGNUPLOT, "cannot run gnuplot program '%s': %s; "
                               INSTALL_HINT, program, strerror(child_errno));
        else
            st = arrank_errorf(err, ARRANK_EPLOT, "cannot run gnuplot in '%s': %s", dir,
                               strerror(child_errno));
    } else if (!WIFEXITED(status) || WEXITSTATUS(status) != 0 || (werr && werr != EPIPE)) {
        char msg[ARRANK_ERROR_MSG_MAX];
        gnuplot_message(log, msg, sizeof msg);
        if (WIFSIGNALED(status))
            st = arrank_errorf(err, ARRANK_EPLOT, "%s (killed by signal %d)", msg,
                               WTERMSIG(status));
        else
            st = arrank_errorf(err, ARRANK_EPLOT, "%s", msg);
    } else if (werr) {
        char msg[ARRANK_ERROR_MSG_MAX];
        gnuplot_message(log, msg, sizeof msg);
        st = arrank_errorf(err, ARRANK_EPLOT, "gnuplot stopped reading its script: %s", msg);
    }
    fclose(log);
    return st;
}

