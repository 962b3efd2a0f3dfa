using Decohere.Core;
using Decohere.IO;

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
        Assert.Equal(["delay", "i", "mode", "q"], table.Names.Order(StringComparer.Ordinal));
        // units = "ms" on the dataset: 1.5 ms is 0.0015 s.
        Assert.Equal([0, 0, 0, 1.5e-3, 1.5e-3, 1.5e-3], table.Numbers["delay"]);
        // float32, gzip-compressed in chunks of 3: exact binary fractions survive the single-precision round trip.
        Assert.Equal([0.25, -0.5, 1.0, 2.0, -1.5, 0.125], table.Numbers["i"]);
        // int16.
        Assert.Equal([1.0, -2, 3, -4, 5, -6], table.Numbers["q"]);
        Assert.All(table.Texts["mode"], m => Assert.Equal("drum", m));
        Assert.Contains(table.Skipped, s => s.StartsWith("raw (shape 2×3", StringComparison.Ordinal));
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
