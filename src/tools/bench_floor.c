/*
 * bench_floor.c - the floor for `make bench`: list a campaign folder and
 * open, read and close every *.csv in it, nothing else.  No reader of the
 * campaign can take less time than this, so the benchmark compares arrank
 * with it.  Prints the number of files and bytes read.
 *
 *   bench_floor DIR
 */
#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <string.h>
#include <unistd.h>

int main(int argc, char **argv)
{
    if (argc != 2) {
        fprintf(stderr, "usage: bench_floor DIR\n");
        return 2;
    }
    DIR *d = opendir(argv[1]);
    if (!d) {
        perror(argv[1]);
        return 3;
    }
    static char buf[1 << 16];
    char path[4096];
    unsigned long files = 0, bytes = 0;
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
        size_t n = strlen(e->d_name);
        if (e->d_name[0] == '.' || n < 5 || strcmp(e->d_name + n - 4, ".csv") != 0)
            continue;
        snprintf(path, sizeof path, "%s/%s", argv[1], e->d_name);
        int fd = open(path, O_RDONLY);
        if (fd < 0) {
            perror(path);
            closedir(d);
            return 3;
        }
        ssize_t r;
        while ((r = read(fd, buf, sizeof buf)) > 0)
            bytes += (unsigned long)r;
        close(fd);
        files++;
    }
    closedir(d);
    printf("%lu files, %lu bytes\n", files, bytes);
    return 0;
}
