/*
 * jsonutil.h - reading the command's JSON results in tests (cJSON). Apart
 * from testutil so that tests which do not read JSON link no JSON library.
 */
#ifndef LC_JSONUTIL_H
#define LC_JSONUTIL_H

#include <cjson/cJSON.h>

#include "testutil.h"

/* The command's JSON result (stdout of the last lc_test_lacuna, out.json in
 * the temporary directory), parsed: free it with cJSON_Delete. Fails the test
 * when it is not JSON. */
cJSON *lc_test_result(void);

/* The member key of j, of the type named; each fails the test when key is
 * missing or of another type. */
double lc_test_num(const cJSON *j, const char *key);
bool lc_test_flag(const cJSON *j, const char *key);
const char *lc_test_str(const cJSON *j, const char *key);

#endif
