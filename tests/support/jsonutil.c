/* jsonutil.c - see jsonutil.h. */
#include "jsonutil.h"

#include <stdlib.h>

cJSON *lc_test_result(void)
{
    char *s = lc_test_slurp(lc_test_tmp("out.json"));
    assert_non_null(s);
    cJSON *j = cJSON_Parse(s);
    if (!j)
        fail_msg("not JSON: %s", s);
    free(s);
    return j;
}

/* The member key of j when type says it is the right kind, else a failure. */
static const cJSON *member(const cJSON *j, const char *key, cJSON_bool (*type)(const cJSON *),
                           const char *kind)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(j, key);
    if (!type(it))
        fail_msg("no %s %s", kind, key);
    return it;
}

double lc_test_num(const cJSON *j, const char *key)
{
    return member(j, key, cJSON_IsNumber, "number")->valuedouble;
}

bool lc_test_flag(const cJSON *j, const char *key)
{
    return cJSON_IsTrue(member(j, key, cJSON_IsBool, "boolean"));
}

const char *lc_test_str(const cJSON *j, const char *key)
{
    return member(j, key, cJSON_IsString, "string")->valuestring;
}
