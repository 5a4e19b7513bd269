# Shards on real engines (ctest -L cluster): a suite run as a Slurm job array on a throw-away
# single-node cluster, and as a CI matrix of concurrent processes; each merge must equal a
# one-machine run. The Slurm test needs root and Debian's slurm-wlm and munge
# (scripts/setup --tests) and reports itself skipped (exit 77) where its daemons cannot start.
# RUN_SERIAL: both start several stepgate processes at once, and the Slurm test gives its node
# every core of the machine.
if(TARGET stepgate)
  set(cluster_dir ${CMAKE_CURRENT_LIST_DIR})

  add_test(NAME "cluster: a Slurm job array of 4 shards merges to the one-machine run"
           COMMAND bash ${cluster_dir}/slurm_array.sh $<TARGET_FILE:stepgate> ${cluster_dir}/suite.json)
  # 300 s for the array (the script's own bound, so its cleanup stops the daemons first), plus
  # the start of the daemons (at most 60 s) and the one-machine run.
  set_tests_properties("cluster: a Slurm job array of 4 shards merges to the one-machine run"
                       PROPERTIES SKIP_RETURN_CODE 77 LABELS cluster TIMEOUT 600 RUN_SERIAL TRUE)

  add_test(NAME "cluster: a CI matrix of 3 concurrent shard jobs merges to the one-machine run"
           COMMAND bash ${cluster_dir}/ci_matrix.sh $<TARGET_FILE:stepgate> ${cluster_dir}/suite.json 3)
  set_tests_properties("cluster: a CI matrix of 3 concurrent shard jobs merges to the one-machine run"
                       PROPERTIES SKIP_RETURN_CODE 77 LABELS cluster TIMEOUT 300 RUN_SERIAL TRUE)
endif()
