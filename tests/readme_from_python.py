import racfield

case = racfield.load_case("cases/demo_transformer.toml")     # a path, TOML text or a dict
results = racfield.solve(case, progress=lambda done, total, f: print(f"solved {done}/{total} at {f:.4g} Hz"))

print(results.frequencies_hz)                 # Hz
print(results.rac_over_rdc["primary"])        # Rac/Rdc, one value per frequency
print(results.loss_w["secondary"])            # W, at the case currents
print(results.leakage_l_h)                    # H, referred to the first winding
for row in results.table()[:4]:               # one dict per frequency and winding, as rac.csv
    print(row["frequency_hz"], row["winding"], row["rac_ohm"], row["loss_w"])

figure = results.plot_rac()                   # a matplotlib Figure: shown inline in a notebook
figure.savefig("rac_over_rdc.png")
results.write("results/demo_transformer")     # the files racfield run writes: results.json, rac.csv, ...
