/*
 * test_sha256.c - SHA-256 (io/sha256.c) against the worked examples of
 * NIST FIPS 180-2, Appendix B ("abc", the 448-bit two-block message, one
 * million 'a'), the empty message, and coreutils' sha256sum on random
 * buffers of every length around the padding's block boundaries (seed
 * printed).
 */
#include "test_util.h"

#include "io/sha256_internal.h"

#include <unistd.h>

static void digest_is(const char *msg, size_t len, const char *want)
{
    char hex[65];
    tram__sha256_hex(msg, len, hex);
    assert_string_equal(hex, want);
}

static void test_fips_examples(void **state)
{
    (void)state;
    /* FIPS 180-2 Appendix B.1 and B.2 */
    digest_is("abc", 3, "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    const char *m2 = "abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq";
    digest_is(m2, strlen(m2), "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
    /* FIPS 180-2 Appendix B.3: one million 'a' */
    char *a = malloc(1000000);
    assert_non_null(a);
    memset(a, 'a', 1000000);
    digest_is(a, 1000000, "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
    free(a);
    digest_is("", 0, "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

/* coreutils sha256sum on the same bytes (skipped when not installed). */
static void test_against_sha256sum(void **state)
{
    (void)state;
    if (system("command -v sha256sum >/dev/null 2>&1") != 0) skip();
    test_rng rng = {20261202};
    printf("seed 20261202\n");
    char path[] = "/tmp/tram-sha-XXXXXX";
    int fd = mkstemp(path);
    assert_true(fd >= 0);
    close(fd);
    unsigned char buf[200];
    for (size_t len = 50; len < 140; len += 3) {
        for (size_t i = 0; i < len; i++) buf[i] = (unsigned char)(test_rng_next(&rng) & 255);
        FILE *f = fopen(path, "wb");
        assert_non_null(f);
        assert_int_equal(fwrite(buf, 1, len, f), len);
        fclose(f);
        char cmd[128], want[80] = "";
        snprintf(cmd, sizeof cmd, "sha256sum %s", path);
        FILE *p = popen(cmd, "r");
        assert_non_null(p);
        assert_non_null(fgets(want, sizeof want, p));
        pclose(p);
        want[64] = '\0';
        char hex[65];
        tram__sha256_hex(buf, len, hex);
        assert_string_equal(hex, want);
    }
    remove(path);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_fips_examples),
                                       cmocka_unit_test(test_against_sha256sum)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
