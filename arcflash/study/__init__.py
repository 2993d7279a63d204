"""Studies: run the models over equipment and sites, producing result records."""
