/* recovery.c — see recovery.h. */
#include "recovery.h"

#include <errno.h>
#include <limits.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

static char *recovery_strdup(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d == NULL)
        abort();
    memcpy(d, s, n);
    return d;
}

/* The absolute form of path without resolving links (the name the user
 * gave is the session's identity; a link and its target are two). */
static char *recovery_absolute(const char *path)
{
    if (path[0] == '/')
        return recovery_strdup(path);
    char cwd[PATH_MAX];
    if (getcwd(cwd, sizeof cwd) == NULL)
        return recovery_strdup(path);
    size_t n = strlen(cwd) + strlen(path) + 2;
    char *a = malloc(n);
    if (a == NULL)
        abort();
    snprintf(a, n, "%s/%s", cwd, path);
    return a;
}

char *recovery_path_for(const char *path)
{
    const char *xdg = getenv("XDG_STATE_HOME"), *home = getenv("HOME");
    char base[PATH_MAX];
    if (xdg != NULL && xdg[0] == '/')
        snprintf(base, sizeof base, "%s/nilstep", xdg);
    else if (home != NULL && home[0] != '\0')
        snprintf(base, sizeof base, "%s/.local/state/nilstep", home);
    else
        return NULL;
    char *abs = path ? recovery_absolute(path) : recovery_strdup("(built-in scenario)");
    uint64_t h = 0xcbf29ce484222325ULL; /* FNV-1a, 64 bits */
    for (const unsigned char *p = (const unsigned char *)abs; *p; p++) {
        h ^= *p;
        h *= 0x100000001b3ULL;
    }
    const char *name = "untitled";
    if (path) {
        const char *slash = strrchr(abs, '/');
        name = slash ? slash + 1 : abs;
    }
    /* keep the name short enough for any file system, whole characters */
    size_t k = strlen(name);
    if (k > 100) {
        k = 100;
        while (k > 0 && ((unsigned char)name[k] & 0xC0) == 0x80)
            k--;
    }
    size_t n = strlen(base) + k + 40;
    char *r = malloc(n);
    if (r == NULL)
        abort();
    snprintf(r, n, "%s/%.*s-%016llx.nilstep", base, (int)k, name, (unsigned long long)h);
    free(abs);
    return r;
}

/* mkdir -p for the directory part of file, private to the user. */
static int recovery_make_dirs(const char *file)
{
    char *d = recovery_strdup(file);
    char *slash = strrchr(d, '/');
    if (slash)
        *slash = '\0';
    for (char *p = d + 1; *p; p++) {
        if (*p != '/')
            continue;
        *p = '\0';
        if (mkdir(d, 0700) != 0 && errno != EEXIST) {
            free(d);
            return -1;
        }
        *p = '/';
    }
    int r = mkdir(d, 0700) != 0 && errno != EEXIST ? -1 : 0;
    free(d);
    return r;
}

ns_status recovery_write(const char *rpath, const session_t s, nserr_t err)
{
    if (recovery_make_dirs(rpath) != 0)
        return nserr_set(err, NS_ERR_IO, 0, 0, "cannot create the directory of '%s': %s", rpath,
                         strerror(errno));
    return session_save(s, rpath, err);
}

void recovery_remove(const char *rpath)
{
    if (rpath)
        unlink(rpath);
}

static int recovery_same(const char *a, const char *b)
{
    if (a == NULL || b == NULL)
        return a == b;
    return strcmp(a, b) == 0;
}

static void recovery_add(char *out, size_t n, const char *key, const char *value)
{
    size_t len = strlen(out);
    if (len >= n - 1)
        return;
    if (value)
        snprintf(out + len, n - len, "%s%s: %s", len ? "; " : "", key, value);
    else
        snprintf(out + len, n - len, "%s%s", len ? "; " : "", key);
}

char *recovery_describe(const session_t file, const session_t rec)
{
    char out[2000] = "";
    char cls[32];
    if (!recovery_same(file->title.text, rec->title.text))
        recovery_add(out, sizeof out, "title", rec->title.text ? rec->title.text : "(none)");
    if (!recovery_same(file->group.text, rec->group.text))
        recovery_add(out, sizeof out, "group", rec->group.text);
    if (file->cls != rec->cls) {
        snprintf(cls, sizeof cls, "%d", rec->cls);
        recovery_add(out, sizeof out, "class", cls);
    }
    if (!recovery_same(file->map.text, rec->map.text))
        recovery_add(out, sizeof out, "map", rec->map.text ? rec->map.text : "(identity)");
    int notes = file->nnotes != rec->nnotes;
    for (slong i = 0; !notes && i < file->nnotes; i++)
        notes = !recovery_same(file->notes[i].text, rec->notes[i].text);
    if (notes)
        recovery_add(out, sizeof out, "notes", NULL);
    for (char *c = out; *c; c++)
        if (*c == '\n')
            *c = ' ';
    return recovery_strdup(out);
}
