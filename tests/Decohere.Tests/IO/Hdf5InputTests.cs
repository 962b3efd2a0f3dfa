using Decohere.Core;
using Decohere.IO;
using Decohere.Scenarios;
using Decohere.Statistics;

namespace Decohere.Tests.IO;

/// <summary>
/// HDF5 lab files read as tables. The fixture was written by h5py 3.7 on libhdf5 (Debian python3-h5py), a writer
/// independent of our reader, by tools/reference/make-hdf5-fixture.py; the values below are the ones that script writes.
/// </summary>
public sealed class Hdf5InputTests
{
    private static readonly string Fixture = Path.Combine(AppContext.BaseDirectory, "IO", "Data", "lab-shots.h5");

    [Fact]
    public void AGroupsDatasetsAreColumnsWithTimesInSecondsAndOtherDatasetsSkipped()
    {
        Assert.True(Hdf5Columns.IsHdf5(Fixture));
        var table = Hdf5Columns.Read(Fixture, "/run7");
        Assert.Equal(6, table.Rows);
        Assert.Equal(["delay", "i", "label", "mode", "q"], table.Names.Order(StringComparer.Ordinal));
        // units = "ms" on the dataset: 1.5 ms is 0.0015 s.
        Assert.Equal([0, 0, 0, 1.5e-3, 1.5e-3, 1.5e-3], table.Numbers["delay"]);
        // float32, gzip-compressed in chunks of 3: exact binary fractions survive the single-precision round trip.
        Assert.Equal([0.25, -0.5, 1.0, 2.0, -1.5, 0.125], table.Numbers["i"]);
        // int16.
        Assert.Equal([1.0, -2, 3, -4, 5, -6], table.Numbers["q"]);
        Assert.All(table.Texts["mode"], m => Assert.Equal("drum", m));
        // Variable-length UTF-8 strings (h5py's string_dtype).
        Assert.Equal("a b c d e f", string.Join(" ", table.Texts["label"]));
        Assert.Contains(table.Skipped, s => s.StartsWith("raw (shape 2×3", StringComparison.Ordinal));
    }

    [Fact]
    public async Task AFitReadsShotsFromAnHdf5GroupLikeFromCsv()
    {
        var scenario = ScenarioLoader.Parse("""
            name: hdf5-drum
            model: effective
            modes:
              drum: { kind: mechanical, frequency: 4 MHz, linewidth: 10 Hz, bath: { occupancy: 50 } }
            stages:
              - name: release
                duration: 5 ms
            readout: { mode: drum, added_noise: 1, shots: 3, stage: release, delays: [0 ms, 1.5 ms] }
            """, "hdf5.yaml");
        var data = await FitDataReader.ReadAsync(Fixture + ":/run7", scenario, DataOptions.Parse(["delay_s=delay"], null));
        Assert.Equal(DataShape.Shots, data.Shape);
        Assert.Equal([0, 1.5e-3], data.Delays.Select(d => d.DelayS));
        // Unbiased sample variances of the fixture's three shots per delay, by hand:
        // i = (0.25, −0.5, 1) → 1.125/2; q = (1, −2, 3) → (114/9)/2; i = (2, −1.5, 0.125) → 6.135416…/2; q = (−4, 5, −6) → (618/9)/2.
        Assert.Equal(0.5625, data.Delays[0].VarI, 12);
        Assert.Equal(114.0 / 18, data.Delays[0].VarQ, 12);
        Assert.Equal(6.1354166666666667 / 2, data.Delays[1].VarI, 12);
        Assert.Equal(618.0 / 18, data.Delays[1].VarQ, 12);
        Assert.Equal(3, data.Delays[1].Shots);
    }

    [Fact]
    public void TheGroupIsChosenWithAColonAfterTheFileName()
    {
        var (file, group) = Hdf5Columns.SplitGroup(Fixture + ":/run7");
        Assert.Equal(Fixture, file);
        Assert.Equal("/run7", group);
        Assert.Equal((Fixture, "/"), Hdf5Columns.SplitGroup(Fixture));
    }

    [Fact]
    public void TheRootWithoutColumnsNamesItsGroups()
    {
        var e = Assert.Throws<InputException>(() => Hdf5Columns.Read(Fixture));
        Assert.Contains("fridge_temperature (a scalar", e.Message);
        Assert.Contains("run7", e.Message);
        Assert.Contains("FILE:/GROUP", e.Message);
    }

    [Fact]
    public void VoltsAreRefusedWithTheReasonAndUnevenColumnsWithTheirLengths()
    {
        var volts = Assert.Throws<InputException>(() => Hdf5Columns.Read(Fixture, "/volts"));
        Assert.Contains("dataset i: unit 'V'", volts.Message);
        Assert.Contains("noise calibration", volts.Message);
        var uneven = Assert.Throws<InputException>(() => Hdf5Columns.Read(Fixture, "/uneven"));
        Assert.Contains("a: 3, b: 4", uneven.Message);
        var missing = Assert.Throws<InputException>(() => Hdf5Columns.Read(Fixture, "/run8"));
        Assert.Contains("no group '/run8'", missing.Message);
    }

    [Fact]
    public void ADamagedFileIsAnInputErrorNamingIt()
    {
        string dir = TestPaths.NewTempDirectory();
        var bytes = File.ReadAllBytes(Fixture);
        string cut = Path.Combine(dir, "cut.h5");
        File.WriteAllBytes(cut, bytes[..600]);
        Assert.True(Hdf5Columns.IsHdf5(cut));
        var e = Assert.Throws<InputException>(() => Hdf5Columns.Read(cut, "/run7"));
        Assert.StartsWith("cut.h5:/run7:", e.Message);
    }
}
