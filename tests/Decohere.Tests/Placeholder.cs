namespace Decohere.Tests;
