/* test_decode.c: command-line driver of the reference decoder, for tests and for makers.
 *
 *   test_decode info FILE        print the header figures
 *   test_decode dump FILE OUT    write every frame, in order and wire order, to OUT ("-": stdout)
 *   test_decode frame FILE K     print frame K as hex
 *   test_decode crc FILE         print the CRC-32 of the whole file (no validation)
 *   test_decode marks FILE       print the resync marks ("FRAME BAR", one a line, in bar order)
 *
 * FILE may be a full table, a compact table (version 1 or 2) or a program form
 * (magic "GSPR", played by glowscore_program.c): info, dump, frame and marks work
 * on each; a version-1 table has no marks.
 *
 * Built with -DEMBED_HEADER='"name.h"' -DEMBED_NAME=name_table -DEMBED_MACRO=NAME_TABLE
 * it also offers
 *   test_decode embedded OUT     check the header's macros against the embedded table (or
 *                                program form, played), dump every frame
 *
 * Exit status: 0 done, 1 the table was refused (reason on stderr), 2 usage or file error.
 * The decoder itself never allocates; this host tool reads files with malloc.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "glowscore_program.h"
#include "glowscore_table.h"

#ifdef EMBED_HEADER
#include EMBED_HEADER
#define GT_CAT(a, b) a##b
#define GT_XCAT(a, b) GT_CAT(a, b)
#define GT_M(suffix) GT_XCAT(EMBED_MACRO, suffix)
#endif

static int usage(void)
{
    fprintf(stderr, "usage: test_decode info|dump|frame|crc|marks FILE [OUT|K]\n");
    return 2;
}

static uint8_t *read_file(const char *path, size_t *len)
{
    FILE *f = fopen(path, "rb");
    uint8_t *buf = NULL;
    size_t cap = 0, n = 0;
    if (f == NULL) {
        return NULL;
    }
    for (;;) {
        size_t got;
        if (n == cap) {
            size_t ncap = cap ? cap * 2 : 65536;
            uint8_t *nbuf = (uint8_t *)realloc(buf, ncap);
            if (nbuf == NULL) {
                free(buf);
                fclose(f);
                return NULL;
            }
            buf = nbuf;
            cap = ncap;
        }
        got = fread(buf + n, 1, cap - n, f);
        n += got;
        if (got == 0) {
            break;
        }
    }
    if (ferror(f)) {
        free(buf);
        fclose(f);
        return NULL;
    }
    fclose(f);
    *len = n;
    return buf;
}

static int refuse(glowtab_status s)
{
    fprintf(stderr, "error: %s\n", glowtab_status_text(s));
    return 1;
}

static int dump(const glowtab *t, const char *out_path)
{
    FILE *out = strcmp(out_path, "-") == 0 ? stdout : fopen(out_path, "wb");
    uint8_t *frame;
    uint32_t k;
    int rc = 0;
    if (out == NULL) {
        return 2;
    }
    frame = (uint8_t *)malloc(t->frame_size ? t->frame_size : 1);
    if (frame == NULL) {
        return 2;
    }
    for (k = 0; k < t->frame_count; k++) {
        glowtab_status s = glowtab_read_frame(t, k, frame, t->frame_size);
        if (s != GLOWTAB_OK) {
            rc = refuse(s);
            break;
        }
        if (fwrite(frame, 1, t->frame_size, out) != t->frame_size) {
            rc = 2;
            break;
        }
    }
    free(frame);
    if (out != stdout) {
        fclose(out);
    } else {
        fflush(out);
    }
    return rc;
}

static void print_info(const glowtab *t)
{
    printf("form=%s frame_rate_hz=%lu leds=%lu frames=%lu bytes_per_led=%u order=%s "
           "frame_size=%lu segments=%lu crc32=%08lx\n",
           t->is_compact ? "compact" : "full", (unsigned long)t->frame_rate_hz,
           (unsigned long)t->led_count, (unsigned long)t->frame_count,
           (unsigned)t->bytes_per_led, t->order, (unsigned long)t->frame_size,
           (unsigned long)t->segment_count, (unsigned long)t->crc32);
}

static void print_marks(const glowtab *t)
{
    uint32_t i, f, bar;
    for (i = 0; glowtab_mark(t, i, &f, &bar); i++) {
        printf("%lu %lu\n", (unsigned long)f, (unsigned long)bar);
    }
}

static int refuse_program(glowprog_status s)
{
    fprintf(stderr, "error: %s\n", glowprog_status_text(s));
    return 1;
}

/* Every frame of a program form, played, to out_path ("-": stdout). */
static int dump_program(const glowprog *p, uint8_t *frame, const char *out_path)
{
    FILE *out = strcmp(out_path, "-") == 0 ? stdout : fopen(out_path, "wb");
    uint32_t k;
    int rc = 0;
    if (out == NULL) {
        return 2;
    }
    for (k = 0; k < p->frame_count && rc == 0; k++) {
        glowprog_status s = glowprog_frame(p, k, frame, p->frame_size);
        if (s != GLOWPROG_OK) {
            rc = refuse_program(s);
        } else if (fwrite(frame, 1, p->frame_size, out) != p->frame_size) {
            rc = 2;
        }
    }
    if (out != stdout) {
        fclose(out);
    } else {
        fflush(out);
    }
    return rc;
}

/* info, dump, frame and marks of a program form. */
static int program(int argc, char **argv, const uint8_t *buf, size_t len)
{
    glowprog p;
    glowprog_status s = glowprog_open(&p, buf, len);
    uint8_t *frame;
    int rc = 0;
    if (s != GLOWPROG_OK) {
        return refuse_program(s);
    }
    frame = (uint8_t *)malloc(p.frame_size ? p.frame_size : 1);
    if (frame == NULL) {
        return 2;
    }
    if (strcmp(argv[1], "info") == 0 && argc == 3) {
        printf("form=program frame_rate_hz=%lu leds=%lu frames=%lu bytes_per_led=%u order=%s "
               "frame_size=%lu marks=%lu crc32=%08lx\n",
               (unsigned long)p.frame_rate_hz, (unsigned long)p.led_count,
               (unsigned long)p.frame_count, (unsigned)p.bytes_per_led, p.order,
               (unsigned long)p.frame_size, (unsigned long)p.marks.count,
               (unsigned long)p.crc32);
    } else if (strcmp(argv[1], "marks") == 0 && argc == 3) {
        uint32_t i, f, bar;
        for (i = 0; glowprog_mark(&p, i, &f, &bar); i++) {
            printf("%lu %lu\n", (unsigned long)f, (unsigned long)bar);
        }
    } else if (strcmp(argv[1], "dump") == 0 && argc == 4) {
        rc = dump_program(&p, frame, argv[3]);
    } else if (strcmp(argv[1], "frame") == 0 && argc == 4) {
        char *end = NULL;
        unsigned long k = strtoul(argv[3], &end, 10);
        if (end == argv[3] || *end != '\0' || k > 0xFFFFFFFFul) {
            rc = usage();
        } else if ((s = glowprog_frame(&p, (uint32_t)k, frame, p.frame_size)) != GLOWPROG_OK) {
            rc = refuse_program(s);
        } else {
            uint32_t c;
            for (c = 0; c < p.frame_size; c++) {
                printf("%02x", frame[c]);
            }
            printf("\n");
        }
    } else {
        rc = usage();
    }
    free(frame);
    return rc;
}

#ifdef EMBED_HEADER
/* The embedded program form, played through glowscore_program.c. */
static int embedded_program(const char *out_path)
{
    glowprog p;
    uint8_t *frame;
    int rc;
    glowprog_status s = glowprog_open(&p, EMBED_NAME, sizeof EMBED_NAME);
    if (s != GLOWPROG_OK) {
        return refuse_program(s);
    }
    if (sizeof EMBED_NAME != GT_M(_SIZE) || p.frame_rate_hz != GT_M(_FRAME_RATE_HZ) ||
        p.led_count != GT_M(_LED_COUNT) || p.frame_count != GT_M(_FRAME_COUNT) ||
        p.bytes_per_led != GT_M(_BYTES_PER_LED) || GT_M(_IS_COMPACT) != 0 ||
        GT_M(_IS_PROGRAM) != 1) {
        fprintf(stderr, "error: macros disagree with the embedded program form\n");
        return 1;
    }
    printf("form=program frames=%lu wire_order=%s\n", (unsigned long)p.frame_count,
           GT_M(_WIRE_ORDER));
    frame = (uint8_t *)malloc(p.frame_size ? p.frame_size : 1);
    if (frame == NULL) {
        return 2;
    }
    rc = dump_program(&p, frame, out_path);
    free(frame);
    return rc;
}

static int embedded(const char *out_path)
{
    glowtab t;
    glowtab_status s;
    if (GT_M(_IS_PROGRAM)) {
        return embedded_program(out_path);
    }
    s = glowtab_open(&t, EMBED_NAME, sizeof EMBED_NAME);
    if (s != GLOWTAB_OK) {
        return refuse(s);
    }
    if (sizeof EMBED_NAME != GT_M(_SIZE) || t.frame_rate_hz != GT_M(_FRAME_RATE_HZ) ||
        t.led_count != GT_M(_LED_COUNT) || t.frame_count != GT_M(_FRAME_COUNT) ||
        t.bytes_per_led != GT_M(_BYTES_PER_LED) || t.is_compact != GT_M(_IS_COMPACT)) {
        fprintf(stderr, "error: macros disagree with the embedded table\n");
        return 1;
    }
    print_info(&t);
    printf("wire_order=%s\n", GT_M(_WIRE_ORDER));
    return dump(&t, out_path);
}
#endif

int main(int argc, char **argv)
{
    uint8_t *buf;
    size_t len = 0;
    glowtab t;
    glowtab_status s;
    int rc;
#ifdef EMBED_HEADER
    if (argc == 3 && strcmp(argv[1], "embedded") == 0) {
        return embedded(argv[2]);
    }
#endif
    if (argc < 3) {
        return usage();
    }
    buf = read_file(argv[2], &len);
    if (buf == NULL) {
        fprintf(stderr, "error: cannot read %s\n", argv[2]);
        return 2;
    }
    if (strcmp(argv[1], "crc") == 0 && argc == 3) {
        printf("%08lx\n", (unsigned long)glowtab_crc32(0, buf, len));
        free(buf);
        return 0;
    }
    if (len >= 4 && memcmp(buf, "GSPR", 4) == 0) {
        rc = program(argc, argv, buf, len);
        free(buf);
        return rc;
    }
    s = glowtab_open(&t, buf, len);
    if (s != GLOWTAB_OK) {
        free(buf);
        return refuse(s);
    }
    if (strcmp(argv[1], "info") == 0 && argc == 3) {
        print_info(&t);
        rc = 0;
    } else if (strcmp(argv[1], "marks") == 0 && argc == 3) {
        print_marks(&t);
        rc = 0;
    } else if (strcmp(argv[1], "dump") == 0 && argc == 4) {
        rc = dump(&t, argv[3]);
    } else if (strcmp(argv[1], "frame") == 0 && argc == 4) {
        char *end = NULL;
        unsigned long k = strtoul(argv[3], &end, 10);
        uint8_t *frame = (uint8_t *)malloc(t.frame_size);
        rc = 0;
        if (frame == NULL || end == argv[3] || *end != '\0' || k > 0xFFFFFFFFul) {
            rc = usage();
        } else if ((s = glowtab_read_frame(&t, (uint32_t)k, frame, t.frame_size)) != GLOWTAB_OK) {
            rc = refuse(s);
        } else {
            uint32_t c;
            for (c = 0; c < t.frame_size; c++) {
                printf("%02x", frame[c]);
            }
            printf("\n");
        }
        free(frame);
    } else {
        rc = usage();
    }
    free(buf);
    return rc;
}
