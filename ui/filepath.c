/* filepath.c — see filepath.h. */
#include "filepath.h"

#include <dirent.h>
#include <pwd.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

static char *fp_strndup(const char *s, size_t n)
{
    char *d = malloc(n + 1);
    if (d == NULL)
        abort();
    memcpy(d, s, n);
    d[n] = '\0';
    return d;
}

static char *fp_concat(const char *a, const char *b)
{
    size_t la = strlen(a), lb = strlen(b);
    char *d = malloc(la + lb + 1);
    if (d == NULL)
        abort();
    memcpy(d, a, la);
    memcpy(d + la, b, lb + 1);
    return d;
}

/* The home directory of user (NULL or "": the current one), or NULL. */
static const char *fp_home(const char *user)
{
    if (user == NULL || user[0] == '\0') {
        const char *h = getenv("HOME");
        if (h && h[0])
            return h;
        struct passwd *pw = getpwuid(getuid());
        return pw ? pw->pw_dir : NULL;
    }
    struct passwd *pw = getpwnam(user);
    return pw ? pw->pw_dir : NULL;
}

char *filepath_expand(const char *typed)
{
    if (typed[0] != '~')
        return fp_strndup(typed, strlen(typed));
    const char *slash = strchr(typed, '/');
    size_t ulen = slash ? (size_t)(slash - typed - 1) : strlen(typed + 1);
    char *user = fp_strndup(typed + 1, ulen);
    const char *home = fp_home(user);
    free(user);
    if (home == NULL)
        return fp_strndup(typed, strlen(typed));
    return fp_concat(home, slash ? slash : "");
}

static int fp_cmp(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

void filepath_free_list(char **list, size_t n)
{
    for (size_t i = 0; i < n; i++)
        free(list[i]);
    free(list);
}

int filepath_complete(char **out, char ***cands, size_t *ncands, const char *typed)
{
    *out = NULL;
    *cands = NULL;
    *ncands = 0;
    /* "~" or "~user" without a slash: the home directory itself */
    if (typed[0] == '~' && strchr(typed, '/') == NULL) {
        char *e = filepath_expand(typed);
        int known = strcmp(e, typed) != 0;
        free(e);
        if (!known)
            return 0;
        *out = fp_concat(typed, "/");
        return 1;
    }
    const char *slash = strrchr(typed, '/');
    size_t dlen = slash ? (size_t)(slash - typed) + 1 : 0; /* with the slash */
    const char *base = typed + dlen;
    size_t blen = strlen(base);
    char *dir_typed = fp_strndup(typed, dlen);
    char *dir = dlen ? filepath_expand(dir_typed) : fp_strndup(".", 1);
    DIR *d = opendir(dir);
    if (d == NULL) {
        free(dir_typed);
        free(dir);
        return 0;
    }
    char **list = NULL;
    size_t n = 0, cap = 0;
    struct dirent *de;
    while ((de = readdir(d)) != NULL) {
        const char *name = de->d_name;
        if (!strcmp(name, ".") || !strcmp(name, ".."))
            continue;
        if (name[0] == '.' && base[0] != '.')
            continue;
        if (strncmp(name, base, blen) != 0)
            continue;
        char *full = fp_concat(dlen ? dir : "", name);
        struct stat st;
        int is_dir = stat(full, &st) == 0 && S_ISDIR(st.st_mode);
        free(full);
        if (n == cap) {
            cap = cap ? 2 * cap : 16;
            char **l = realloc(list, cap * sizeof *l);
            if (l == NULL)
                abort();
            list = l;
        }
        list[n++] = is_dir ? fp_concat(name, "/") : fp_strndup(name, strlen(name));
    }
    closedir(d);
    free(dir);
    if (n == 0) {
        free(list);
        free(dir_typed);
        return 0;
    }
    qsort(list, n, sizeof *list, fp_cmp);
    /* the longest common prefix, cut at a UTF-8 character boundary */
    size_t common = strlen(list[0]);
    for (size_t i = 1; i < n; i++) {
        size_t k = 0;
        while (k < common && list[i][k] == list[0][k])
            k++;
        common = k;
    }
    while (common > 0 && ((unsigned char)list[0][common] & 0xC0) == 0x80)
        common--;
    char *grown = fp_strndup(list[0], common);
    *out = fp_concat(dir_typed, grown);
    free(grown);
    free(dir_typed);
    if (n == 1) {
        filepath_free_list(list, n);
        return 1;
    }
    *cands = list;
    *ncands = n;
    return 2;
}
