function(planmill_warnings target)
  target_compile_options(${target} PRIVATE -Wall -Wextra -Wpedantic -Wshadow -Wconversion
                                           -Wno-sign-conversion $<$<BOOL:${PLANMILL_WERROR}>:-Werror>)
endfunction()
