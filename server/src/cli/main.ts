process.stdout.write("noiselint\n");
