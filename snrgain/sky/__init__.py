"""snrgain.sky: the site's noise sky per month and hour (the sky builder; the day's noise for `snrgain noise`)."""
